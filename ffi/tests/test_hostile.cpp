// The shared table of hostile inputs (tests/vectors/hostile.json) through the C ABI: the
// status of each row and the wording of tl_last_error_message, one row per class of failure
// (resource limits, errors naming the real cause, duplicate components, compact numbers,
// data-file locations, saturation near Tc and at very low T, messages read once). Source of
// every row: the library's own specification of these behaviours (no external source).
//
// usage: test_hostile HOSTILE_JSON
#include "check.hpp"
#include "json.hpp"
#include "tieline.h"

#include <cstdlib>
#include <set>
#include <string>
#include <vector>

// JSON text of a parsed value (enough for model descriptions: objects, arrays, strings,
// numbers written back with 17 significant digits).
static std::string to_text(const json::Value& v) {
    switch (v.type) {
    case json::Value::Null: return "null";
    case json::Value::Bool: return v.b ? "true" : "false";
    case json::Value::Number: return t::num(v.num);
    case json::Value::String: {
        std::string s = "\"";
        for (char c : v.str) {
            if (c == '"' || c == '\\') s += '\\';
            s += c;
        }
        return s + "\"";
    }
    case json::Value::Array: {
        std::string s = "[";
        for (size_t i = 0; i < v.arr.size(); ++i) s += (i ? "," : "") + to_text(v.arr[i]);
        return s + "]";
    }
    case json::Value::Object: {
        std::string s = "{";
        for (size_t i = 0; i < v.obj.size(); ++i)
            s += (i ? "," : "") + to_text(json::Value{json::Value::String, false, 0, v.obj[i].first, {}, {}, ""}) + ":" +
                 to_text(v.obj[i].second);
        return s + "}";
    }
    }
    return "null";
}

// A number of the table: a JSON number, or a string such as "NaN", "inf" or "1e999".
static double number(const json::Value& v) {
    if (v.type == json::Value::String) return std::strtod(v.str.c_str(), nullptr);
    return v.number();
}

static std::string message() {
    char buf[4096];
    size_t needed = 0;
    tl_last_error_message(buf, sizeof buf, &needed);
    return buf;
}

static const char* kind_name(tl_status s) {
    switch (s) {
    case TL_STATUS_OK: return "ok";
    case TL_STATUS_INVALID_INPUT: return "invalid_input";
    case TL_STATUS_UNKNOWN_COMPONENT: return "unknown_component";
    case TL_STATUS_OUTSIDE_VALIDITY: return "outside_validity";
    case TL_STATUS_NO_SOLUTION: return "no_solution";
    case TL_STATUS_NOT_CONVERGED: return "not_converged";
    case TL_STATUS_DATA: return "data";
    default: return "other";
    }
}

static tl_status run(const json::Value& c) {
    const std::string op = c["op"].str;
    if (op == "bank") {
        const char* names[] = {"testane"};
        const tl_model* m = nullptr;
        tl_status s = tl_model_from_component_toml(c["toml"].str.c_str(), names, 1, TL_CUBIC_PENG_ROBINSON, &m);
        if (s == TL_STATUS_OK) tl_model_free(m);
        return s;
    }
    const tl_model* m = nullptr;
    tl_status s = tl_model_from_json(to_text(c["model"]).c_str(), &m);
    if (s != TL_STATUS_OK || op == "model") {
        if (s == TL_STATUS_OK) tl_model_free(m);
        return s;
    }
    double t = c.has("temperature") ? number(c["temperature"]) : NAN;
    double p = c.has("pressure") ? number(c["pressure"]) : NAN;
    std::vector<double> z;
    if (c.has("feed"))
        for (auto& x : c["feed"].arr) z.push_back(number(x));
    tl_flash_options fo;
    tl_flash_options_default(&fo);
    tl_saturation_options so;
    tl_saturation_options_default(&so);
    if (c.has("options")) {
        for (auto& kv : c["options"].obj) {
            if (kv.first == "max_ss_iterations") fo.max_ss_iterations = size_t(kv.second.number());
            if (kv.first == "tolerance") fo.tolerance = number(kv.second);
            if (kv.first == "max_iterations") so.max_iterations = size_t(kv.second.number());
        }
    }
    if (op == "flash") {
        tl_result* r = nullptr;
        tl_result_new(&r);
        s = tl_flash(m, t, p, z.data(), z.size(), &fo, r);
        tl_result_free(r);
    } else if (op == "flash_batch") {
        tl_status st[1];
        tl_batch_output out = {1, 2, st, nullptr, nullptr, nullptr, nullptr, nullptr};
        size_t threads = c.has("threads") ? size_t(c["threads"].number()) : 0;
        s = tl_flash_batch(m, &t, &p, 1, z.data(), z.size(), &fo, threads, &out);
        if (s == TL_STATUS_OK && st[0] != TL_STATUS_OK) s = st[0];
    } else if (op == "saturation_pressure") {
        tl_saturation_point sp;
        s = tl_saturation_pressure(m, 0, t, &so, &sp);
    } else if (op == "saturation_temperature") {
        tl_saturation_point sp;
        s = tl_saturation_temperature(m, 0, p, &so, &sp);
    } else if (op == "bubble_temperature") {
        tl_bubble_dew_point bd;
        s = tl_bubble_temperature(m, p, z.data(), z.size(), &so, &bd, nullptr, 0);
    } else {
        CHECK(false, "unknown op " + op);
    }
    tl_model_free(m);
    return s;
}

int main(int argc, char** argv) {
    if (argc < 2) {
        std::fprintf(stderr, "usage: test_hostile HOSTILE_JSON\n");
        return 2;
    }
    json::Value table = json::parse_file(argv[1]);
    std::set<int> classes;
    for (auto& c : table["cases"].arr) {
        const std::string id = c["id"].str;
        CHECK(!c["source"].str.empty(), id + ": source");
        classes.insert(int(c["class"].number()));
        tl_status s = run(c);
        const auto& want = c["expect"];
        const std::string kind = want["kind"].str;
        if (s == TL_STATUS_OK) {
            CHECK(kind == "ok" || kind == "any", id + ": succeeded, " + kind + " expected");
            continue;
        }
        std::string msg = message();
        for (const char* prefix : {"invalid input:", "no solution:", "data error:", "outside validity range:"}) {
            size_t n = 0;
            for (size_t at = msg.find(prefix); at != std::string::npos; at = msg.find(prefix, at + 1)) ++n;
            CHECK(n <= 1, id + ": prefix repeats: " + msg);
        }
        int run = 0, longest = 0;
        for (char ch : msg) {
            run = (ch >= '0' && ch <= '9') ? run + 1 : 0;
            longest = run > longest ? run : longest;
        }
        CHECK(longest < 20, id + ": long number in: " + msg);
        if (kind == "any") continue;
        CHECK(kind == kind_name(s), id + ": status " + tl_status_name(s) + ", " + kind + " expected: " + msg);
        if (want.has("contains"))
            for (auto& x : want["contains"].arr) CHECK(msg.find(x.str) != std::string::npos, id + ": '" + x.str + "' not in: " + msg);
        if (want.has("absent"))
            for (auto& x : want["absent"].arr) CHECK(msg.find(x.str) == std::string::npos, id + ": '" + x.str + "' in: " + msg);
    }
    for (int k : {1, 2, 3, 4, 6, 7, 8}) CHECK(classes.count(k) == 1, "class " + std::to_string(k) + " has rows");
    return t::finish("test_hostile");
}
