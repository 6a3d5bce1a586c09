// The calculations-by-name vectors (tests/vectors/calculations.json) through the C ABI: each
// case runs through tl_plan_new / tl_run, and its record (tl_record_to_json) must equal the
// Rust engine's record for the same case field by field, bit for bit; a case the engine
// refuses must be refused with the matching status.
//
// usage: test_calc_vectors CALCULATIONS_JSON REFERENCE_JSON
#include "check.hpp"
#include "json.hpp"
#include "tieline.hpp"

#include <map>

static bool same_value(const json::Value& a, const json::Value& b, const std::string& where, std::string& diff) {
    if (a.type != b.type) {
        diff = where + ": types differ (" + a.raw + " vs " + b.raw + ")";
        return false;
    }
    switch (a.type) {
    case json::Value::Null:
        return true;
    case json::Value::Bool:
        if (a.b != b.b) diff = where + ": flags differ";
        return a.b == b.b;
    case json::Value::Number:
        if (!t::same(a.num, b.num)) diff = where + ": " + t::num(a.num) + " vs " + t::num(b.num);
        return t::same(a.num, b.num);
    case json::Value::String:
        if (a.str != b.str) diff = where + ": '" + a.str + "' vs '" + b.str + "'";
        return a.str == b.str;
    case json::Value::Array:
        if (a.arr.size() != b.arr.size()) {
            diff = where + ": lengths differ";
            return false;
        }
        for (size_t i = 0; i < a.arr.size(); ++i)
            if (!same_value(a.arr[i], b.arr[i], where + "[" + std::to_string(i) + "]", diff)) return false;
        return true;
    case json::Value::Object:
        if (a.obj.size() != b.obj.size()) {
            diff = where + ": field counts differ";
            return false;
        }
        for (auto& kv : a.obj) {
            if (!b.has(kv.first)) {
                diff = where + ": no field " + kv.first;
                return false;
            }
            if (!same_value(kv.second, b[kv.first], where + "." + kv.first, diff)) return false;
        }
        return true;
    }
    return false;
}

static const std::map<std::string, tl_status> kinds = {
    {"InvalidInput", TL_STATUS_INVALID_INPUT},     {"UnknownComponent", TL_STATUS_UNKNOWN_COMPONENT},
    {"OutsideValidity", TL_STATUS_OUTSIDE_VALIDITY}, {"NoSolution", TL_STATUS_NO_SOLUTION},
    {"NotConverged", TL_STATUS_NOT_CONVERGED},     {"Data", TL_STATUS_DATA},
};

int main(int argc, char** argv) {
    if (argc != 3) {
        std::fprintf(stderr, "usage: %s CALCULATIONS_JSON REFERENCE_JSON\n", argv[0]);
        return 2;
    }
    using namespace tieline;
    const json::Value file = json::parse_file(argv[1]);
    const json::Value reference = json::parse_file(argv[2]);
    const json::Value& cases = file["cases"];
    const json::Value& ref = reference["calculations"];
    CHECK(cases.size() > 0 && ref.size() == cases.size(), "one reference outcome per case");
    for (size_t i = 0; i < cases.size(); ++i) {
        const json::Value& c = cases[i];
        const std::string id = c["id"].str;
        const json::Value& want = ref[id];
        std::vector<double> args = c.has("args") ? c["args"].numbers() : std::vector<double>{};
        std::vector<double> feed = c["feed"].numbers();
        try {
            Model m = Model::from_json(c["model"].raw);
            Plan plan(c["calculation"].str, c.has("options") ? c["options"].raw : "");
            Record r = plan.run(m, args, feed);
            CHECK(!want.has("error"), id + ": the engine refuses this case, the C ABI did not");
            std::string diff;
            bool same = same_value(json::parse(r.json()), want, id, diff);
            CHECK(same, id + ": record differs from the Rust engine's: " + diff);
        } catch (const Error& e) {
            if (want.has("error")) {
                auto k = kinds.find(want["error"].str);
                CHECK(k != kinds.end() && e.status() == k->second, id + ": status of " + want["error"].str);
            } else {
                CHECK(false, id + ": unexpected error: " + e.what());
            }
        }
    }
    return t::finish("test_calc_vectors");
}
