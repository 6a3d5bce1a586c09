// Minimal test reporting shared by the C++ tests: CHECK counts, and the program ends with
// a "N passed, N failed" line and a non-zero exit code on any failure.
#ifndef TIELINE_TEST_CHECK_HPP
#define TIELINE_TEST_CHECK_HPP

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <string>

namespace t {
inline int& passed() { static int n = 0; return n; }
inline int& failed() { static int n = 0; return n; }

inline void check(bool ok, const std::string& what, const char* file, int line) {
    if (ok) {
        ++passed();
    } else {
        ++failed();
        std::fprintf(stderr, "%s:%d: FAILED: %s\n", file, line, what.c_str());
    }
}

// Bit-for-bit equality of doubles (NaN equals NaN).
inline bool same(double a, double b) {
    if (std::isnan(a) && std::isnan(b)) return true;
    uint64_t x, y;
    std::memcpy(&x, &a, 8);
    std::memcpy(&y, &b, 8);
    return x == y;
}

inline std::string num(double v) {
    char b[64];
    std::snprintf(b, sizeof b, "%.17g", v);
    return b;
}

inline int finish(const char* name) {
    std::printf("%s: %d passed, %d failed\n", name, passed(), failed());
    return failed() == 0 ? 0 : 1;
}
} // namespace t

#define CHECK(cond, what) t::check((cond), std::string(what), __FILE__, __LINE__)
#define CHECK_SAME(a, b, what) \
    t::check(t::same((a), (b)), std::string(what) + ": " + t::num(a) + " vs " + t::num(b), __FILE__, __LINE__)

#endif
