// Mistakes a caller can make: NULL handles and pointers, NaN, negative T or p, wrong
// lengths, zero amounts, unknown names, malformed JSON, wrong handle types, short buffers.
// Each gives the right status and a message that says what was wrong, writes no output and
// does not crash.
#include "check.hpp"
#include "tieline.h"

#include <cmath>
#include <limits>
#include <string>

static std::string last_message() {
    char buf[1024];
    size_t needed = 0;
    tl_last_error_message(buf, sizeof buf, &needed);
    return buf;
}

// The call gives `want`, and the thread's message contains `fragment`.
static void expect(tl_status got, tl_status want, const std::string& fragment, const std::string& what) {
    std::string msg = last_message();
    CHECK(got == want, what + ": got " + tl_status_name(got) + ", want " + tl_status_name(want) + " (" + msg + ")");
    CHECK(msg.find(fragment) != std::string::npos, what + ": message '" + msg + "' lacks '" + fragment + "'");
}

int main() {
    const double nan = std::numeric_limits<double>::quiet_NaN();
    const double inf = std::numeric_limits<double>::infinity();
    const char* names[] = {"methane", "n-butane"};
    const tl_model* m = nullptr;
    tl_model_new(names, 2, TL_CUBIC_PENG_ROBINSON, &m);
    CHECK(m != nullptr, "model");
    tl_context* ctx = nullptr;
    tl_context_new(m, &ctx);
    tl_result* r = nullptr;
    tl_result_new(&r);
    double z[2] = {0.5, 0.5};

    // Models.
    const tl_model* out = reinterpret_cast<const tl_model*>(0x10);
    const char* unknown[] = {"methan", "n-butane"};
    expect(tl_model_new(unknown, 2, TL_CUBIC_PENG_ROBINSON, &out), TL_STATUS_UNKNOWN_COMPONENT, "did you mean: methane",
           "misspelt component");
    CHECK(out == reinterpret_cast<const tl_model*>(0x10), "no model written on error");
    expect(tl_model_new(names, 2, 7, &out), TL_STATUS_INVALID_INPUT, "TL_CUBIC_PENG_ROBINSON", "unknown cubic kind");
    expect(tl_model_new(names, 0, TL_CUBIC_PENG_ROBINSON, &out), TL_STATUS_INVALID_INPUT, "at least one",
           "no components");
    expect(tl_model_new(nullptr, 2, TL_CUBIC_PENG_ROBINSON, &out), TL_STATUS_NULL_POINTER, "names", "NULL names");
    const char* with_null[] = {"methane", nullptr};
    expect(tl_model_new(with_null, 2, TL_CUBIC_PENG_ROBINSON, &out), TL_STATUS_NULL_POINTER, "names[1]",
           "NULL name");
    const char* bad_utf8[] = {"meth\xff"};
    expect(tl_model_new(bad_utf8, 1, TL_CUBIC_PENG_ROBINSON, &out), TL_STATUS_INVALID_UTF8, "UTF-8", "bad UTF-8");
    expect(tl_model_new(names, 2, TL_CUBIC_PENG_ROBINSON, nullptr), TL_STATUS_NULL_POINTER, "out", "NULL out");
    expect(tl_model_from_json("{\"model\": \"cubic\", \"kind\": ", &out), TL_STATUS_DATA, "model description",
           "truncated JSON");
    expect(tl_model_from_json("[1, 2, 3]", &out), TL_STATUS_DATA, "model", "JSON of the wrong shape");
    expect(tl_model_from_json("{\"model\": \"cubic\", \"kind\": \"peng_robinson\", \"components\": [\"unobtainium\"]}",
                              &out),
           TL_STATUS_UNKNOWN_COMPONENT, "unobtainium", "unknown component in a description");
    expect(tl_model_from_json(nullptr, &out), TL_STATUS_NULL_POINTER, "json", "NULL JSON");
    expect(tl_model_from_component_toml("this is = = not toml", names, 2, TL_CUBIC_PENG_ROBINSON, &out),
           TL_STATUS_DATA, "component file", "malformed TOML");
    expect(tl_model_from_component_file("/nonexistent/components.toml", names, 2, TL_CUBIC_PENG_ROBINSON, &out),
           TL_STATUS_IO, "/nonexistent/components.toml", "missing component file");
    CHECK(out == reinterpret_cast<const tl_model*>(0x10), "still no model written");
    size_t nc = 99;
    expect(tl_model_num_components(nullptr, &nc), TL_STATUS_NULL_POINTER, "model", "NULL model");
    CHECK(nc == 99, "no output on error");
    char name[16];
    size_t needed = 0;
    expect(tl_model_component_name(m, 5, name, sizeof name, &needed), TL_STATUS_INDEX_OUT_OF_RANGE, "index 5",
           "component index");
    expect(tl_model_component_name(m, 0, nullptr, 8, &needed), TL_STATUS_NULL_POINTER, "buf", "NULL buffer, len > 0");

    // Handles of the wrong type are caught by their tag.
    expect(tl_model_num_components(reinterpret_cast<const tl_model*>(r), &nc), TL_STATUS_INVALID_HANDLE,
           "model handle is invalid", "a result passed as a model");
    expect(tl_context_flash(reinterpret_cast<tl_context*>(r), 300, 5e6, z, 2, nullptr, r), TL_STATUS_INVALID_HANDLE,
           "context", "a result passed as a context");
    expect(tl_result_num_phases(reinterpret_cast<const tl_result*>(ctx), &nc), TL_STATUS_INVALID_HANDLE, "result",
           "a context passed as a result");
    alignas(8) static unsigned char junk[64] = {0};
    expect(tl_context_new(reinterpret_cast<const tl_model*>(junk), &ctx), TL_STATUS_INVALID_HANDLE, "model",
           "a pointer to junk");
    expect(tl_context_new(reinterpret_cast<const tl_model*>(junk + 1), &ctx), TL_STATUS_INVALID_HANDLE, "model",
           "a misaligned pointer");

    // Flash inputs.
    struct Bad {
        double t, p;
        double n0, n1;
        size_t len;
        const char* fragment;
        const char* what;
    } bad[] = {
        {nan, 5e6, 0.5, 0.5, 2, "temperature", "NaN temperature"},
        {-300, 5e6, 0.5, 0.5, 2, "> 0 K", "negative temperature"},
        {0, 5e6, 0.5, 0.5, 2, "temperature", "zero temperature"},
        {inf, 5e6, 0.5, 0.5, 2, "temperature", "infinite temperature"},
        {300, nan, 0.5, 0.5, 2, "pressure", "NaN pressure"},
        {300, -1e5, 0.5, 0.5, 2, "> 0 Pa", "negative pressure"},
        {300, 5e6, 0.0, 0.0, 2, "at least one amount", "zero amounts"},
        {300, 5e6, 0.5, nan, 2, "component 1", "NaN amount"},
        {300, 5e6, -0.5, 0.5, 2, "component 0", "negative amount"},
        {300, 5e6, 0.5, 0.5, 1, "1 values given for a model of 2", "too few amounts"},
        {300, 5e6, 0.5, 0.5, 3, "3 values given for a model of 2", "too many amounts"},
        {300, 5e6, 0.5, 0.5, 0, "0 values given", "no amounts"},
    };
    for (const auto& b : bad) {
        double n[3] = {b.n0, b.n1, 0.25};
        expect(tl_context_flash(ctx, b.t, b.p, n, b.len, nullptr, r), TL_STATUS_INVALID_INPUT, b.fragment,
               std::string("context flash: ") + b.what);
        expect(tl_flash(m, b.t, b.p, n, b.len, nullptr, r), TL_STATUS_INVALID_INPUT, b.fragment,
               std::string("one-shot flash: ") + b.what);
        expect(tl_stability(m, b.t, b.p, n, b.len, nullptr, r), TL_STATUS_INVALID_INPUT, b.fragment,
               std::string("stability: ") + b.what);
        tl_properties pr;
        expect(tl_phase_properties(m, b.t, b.p, n, b.len, TL_ROOT_STABLE, &pr, nullptr, 0), TL_STATUS_INVALID_INPUT,
               b.fragment, std::string("properties: ") + b.what);
    }
    tl_result_kind kind = TL_RESULT_KIND_FLASH;
    tl_result_kind_of(r, &kind);
    CHECK(kind == TL_RESULT_KIND_EMPTY, "failed calls left the result empty");
    expect(tl_context_flash(ctx, 300, 5e6, nullptr, 2, nullptr, r), TL_STATUS_NULL_POINTER, "n", "NULL amounts");
    expect(tl_context_flash(nullptr, 300, 5e6, z, 2, nullptr, r), TL_STATUS_NULL_POINTER, "context", "NULL context");
    expect(tl_context_flash(ctx, 300, 5e6, z, 2, nullptr, nullptr), TL_STATUS_NULL_POINTER, "result", "NULL result");
    expect(tl_context_flash(ctx, 300, 5e6, reinterpret_cast<const double*>(reinterpret_cast<const char*>(z) + 1), 2,
                            nullptr, r),
           TL_STATUS_INVALID_INPUT, "aligned", "misaligned amounts");
    tl_flash_options o;
    tl_flash_options_default(&o);
    o.tolerance = -1;
    expect(tl_context_flash(ctx, 300, 5e6, z, 2, &o, r), TL_STATUS_INVALID_INPUT, "tolerance", "negative tolerance");
    o.tolerance = nan;
    expect(tl_flash(m, 300, 5e6, z, 2, &o, r), TL_STATUS_INVALID_INPUT, "tolerance", "NaN tolerance");

    // Accessors.
    CHECK(tl_context_flash(ctx, 300, 5e6, z, 2, nullptr, r) == TL_STATUS_OK, "a good flash after bad ones");
    double x[2] = {-1, -1};
    expect(tl_result_phase_composition(r, 0, x, 1), TL_STATUS_BUFFER_TOO_SMALL, "2 are required", "short buffer");
    CHECK(x[0] == -1 && x[1] == -1, "nothing written to a short buffer");
    expect(tl_result_phase_composition(r, 9, x, 2), TL_STATUS_INDEX_OUT_OF_RANGE, "phase index 9", "phase index");
    expect(tl_result_phase_composition(r, 0, nullptr, 2), TL_STATUS_NULL_POINTER, "out", "NULL output array");
    tl_stability_summary summary;
    expect(tl_result_stability(r, &summary), TL_STATUS_WRONG_RESULT_KIND, "stability", "stability of a flash");
    const char* one[] = {"methane"};
    const tl_model* m1 = nullptr;
    tl_model_new(one, 1, TL_CUBIC_PENG_ROBINSON, &m1);
    tl_properties pr;
    expect(tl_result_phase_properties(r, m1, 0, &pr), TL_STATUS_INVALID_INPUT, "model that produced",
           "properties with another model");
    expect(tl_result_to_json(r, name, 4, &needed), TL_STATUS_BUFFER_TOO_SMALL,
           "required", "short JSON buffer");
    CHECK(needed > 4, "JSON size reported");

    // Saturation and mixtures.
    tl_saturation_point sp;
    expect(tl_saturation_pressure(m, 2, 300, nullptr, &sp), TL_STATUS_INDEX_OUT_OF_RANGE, "component index 2",
           "saturation component");
    expect(tl_saturation_pressure(m, 0, nan, nullptr, &sp), TL_STATUS_INVALID_INPUT, "temperature", "NaN T_sat");
    expect(tl_saturation_temperature(m, 1, 5e7, nullptr, &sp), TL_STATUS_NO_SOLUTION, "critical pressure",
           "above p_c");
    tl_bubble_dew_point bp;
    double inc[1];
    expect(tl_bubble_pressure(m, 300, z, 2, nullptr, &bp, inc, 1), TL_STATUS_BUFFER_TOO_SMALL, "incipient",
           "short incipient buffer");
    expect(tl_dew_temperature(m, -5, z, 2, nullptr, &bp, nullptr, 0), TL_STATUS_INVALID_INPUT, "pressure",
           "negative p for a dew temperature");
    expect(tl_phase_properties(m, 300, 1e5, z, 2, 9, &pr, nullptr, 0), TL_STATUS_INVALID_INPUT, "TL_ROOT_STABLE",
           "unknown root choice");

    // Batch.
    double T[3] = {250, 260, nan};
    double P[3] = {5e6, 5e6, 5e6};
    tl_status st[3] = {TL_STATUS_PANIC, TL_STATUS_PANIC, TL_STATUS_PANIC};
    size_t nph[3];
    tl_batch_output bo{3, 2, st, nph, nullptr, nullptr, nullptr, nullptr};
    CHECK(tl_flash_batch(m, T, P, 3, z, 2, nullptr, 1, &bo) == TL_STATUS_OK, "batch with one bad point runs");
    CHECK(st[0] == TL_STATUS_OK && st[1] == TL_STATUS_OK && st[2] == TL_STATUS_INVALID_INPUT,
          "the bad point alone fails");
    CHECK(nph[2] == 0, "a failed point has no phases");
    tl_batch_output small{2, 2, st, nph, nullptr, nullptr, nullptr, nullptr};
    expect(tl_flash_batch(m, T, P, 3, z, 2, nullptr, 1, &small), TL_STATUS_BUFFER_TOO_SMALL, "hold 2 points",
           "batch output too small");
    expect(tl_flash_batch(m, T, P, 3, z, 5, nullptr, 1, &bo), TL_STATUS_INVALID_INPUT, "feeds", "batch feed length");
    expect(tl_flash_batch(m, T, P, 3, z, 2, nullptr, 100000, &bo), TL_STATUS_INVALID_INPUT, "threads",
           "absurd thread count");
    expect(tl_flash_batch(m, T, P, 3, z, 2, nullptr, 1, nullptr), TL_STATUS_NULL_POINTER, "out", "NULL batch output");
    tl_batch_output nostatus{3, 2, nullptr, nph, nullptr, nullptr, nullptr, nullptr};
    expect(tl_flash_batch(m, T, P, 3, z, 2, nullptr, 1, &nostatus), TL_STATUS_NULL_POINTER, "out->status",
           "batch without status array");
    tl_batch_output one_slot{3, 1, st, nph, nullptr, nullptr, nullptr, nullptr};
    double T2[1] = {300};
    CHECK(tl_flash_batch(m, T2, P, 1, z, 2, nullptr, 1, &one_slot) == TL_STATUS_OK && st[0] == TL_STATUS_BUFFER_TOO_SMALL,
          "a two-phase point with one phase slot");

    // Solids and pure-substance calls.
    {
        const tl_model* water = nullptr;
        tl_model_from_json("{\"model\": \"iapws95\"}", &water);
        CHECK(water != nullptr, "water model");
        const tl_solid* ice = nullptr;
        tl_solid_ice_ih_new(&ice);
        CHECK(ice != nullptr, "ice");
        expect(tl_solid_ice_ih_new(nullptr), TL_STATUS_NULL_POINTER, "out", "NULL solid out");
        const tl_solid* sout = reinterpret_cast<const tl_solid*>(0x10);
        expect(tl_solid_carbon_dioxide_new(water, 0, &sout), TL_STATUS_INVALID_INPUT, "carbon dioxide",
               "dry ice anchored to water");
        expect(tl_solid_carbon_dioxide_new(nullptr, 0, &sout), TL_STATUS_NULL_POINTER, "model", "dry ice, NULL fluid");
        expect(tl_solid_carbon_dioxide_new(water, 3, &sout), TL_STATUS_INDEX_OUT_OF_RANGE, "component index 3",
               "dry ice, component out of range");
        expect(tl_solid_carbon_dioxide_new(reinterpret_cast<const tl_model*>(ice), 0, &sout), TL_STATUS_INVALID_HANDLE,
               "model handle", "a solid passed as a model");
        CHECK(sout == reinterpret_cast<const tl_solid*>(0x10), "no solid written on error");

        const tl_solid* solids[] = {ice};
        tl_coexistence c{};
        c.temperature = -1;
        expect(tl_pure_coexistence_temperature(water, 0, solids, 1, TL_PURE_SOLID, TL_PURE_LIQUID, nan, nullptr, &c),
               TL_STATUS_INVALID_INPUT, "pressure", "melting at NaN pressure");
        expect(tl_pure_coexistence_temperature(water, 0, solids, 1, 7, TL_PURE_LIQUID, 101325.0, nullptr, &c),
               TL_STATUS_INVALID_INPUT, "phase_a", "unknown phase code");
        expect(tl_pure_coexistence_temperature(water, 0, solids, 1, TL_PURE_SOLID + 1, TL_PURE_LIQUID, 101325.0,
                                               nullptr, &c),
               TL_STATUS_INDEX_OUT_OF_RANGE, "1 solids", "solid beyond the array");
        expect(tl_pure_coexistence_temperature(water, 0, solids, 1, TL_PURE_LIQUID, TL_PURE_LIQUID, 101325.0, nullptr,
                                               &c),
               TL_STATUS_INVALID_INPUT, "two different phases", "the same phase twice");
        expect(tl_pure_coexistence_temperature(water, 0, solids, 1, TL_PURE_SOLID, TL_PURE_LIQUID, 101325.0, nullptr,
                                               nullptr),
               TL_STATUS_NULL_POINTER, "out", "NULL coexistence out");
        expect(tl_pure_coexistence_temperature(water, 0, nullptr, 1, TL_PURE_SOLID, TL_PURE_LIQUID, 101325.0, nullptr,
                                               &c),
               TL_STATUS_NULL_POINTER, "solids", "NULL solids with a count");
        const tl_solid* null_solid[] = {nullptr};
        expect(tl_pure_coexistence_temperature(water, 0, null_solid, 1, TL_PURE_SOLID, TL_PURE_LIQUID, 101325.0,
                                               nullptr, &c),
               TL_STATUS_NULL_POINTER, "solids[0]", "a NULL solid in the array");
        const tl_solid* wrong[] = {reinterpret_cast<const tl_solid*>(water)};
        expect(tl_pure_coexistence_temperature(water, 0, wrong, 1, TL_PURE_SOLID, TL_PURE_LIQUID, 101325.0, nullptr, &c),
               TL_STATUS_INVALID_HANDLE, "solids[0]", "a model passed as a solid");
        expect(tl_pure_coexistence_temperature(reinterpret_cast<const tl_model*>(ice), 0, solids, 1, TL_PURE_SOLID,
                                               TL_PURE_LIQUID, 101325.0, nullptr, &c),
               TL_STATUS_INVALID_HANDLE, "model handle", "a solid passed as the fluid");
        double bad_guess = nan;
        expect(tl_pure_coexistence_temperature(water, 0, solids, 1, TL_PURE_SOLID, TL_PURE_LIQUID, 101325.0, &bad_guess,
                                               &c),
               TL_STATUS_INVALID_INPUT, "temperature", "NaN temperature guess");
        expect(tl_pure_coexistence_pressure(water, 0, solids, 1, TL_PURE_LIQUID, TL_PURE_VAPOR, -5.0, nullptr, &c),
               TL_STATUS_INVALID_INPUT, "temperature", "negative temperature");
        expect(tl_pure_coexistence_pressure(water, 0, solids, 1, TL_PURE_LIQUID, TL_PURE_VAPOR, 700.0, nullptr, &c),
               TL_STATUS_NO_SOLUTION, "", "boiling above the critical temperature");
        CHECK(c.temperature == -1, "no coexistence written on error");
        tl_pure_phase_point pp{};
        pp.gibbs = 42;
        expect(tl_pure_stable_phase(water, 0, solids, 1, inf, 101325.0, &pp), TL_STATUS_INVALID_INPUT, "temperature",
               "stable phase at infinite T");
        expect(tl_pure_stable_phase(water, 1, solids, 1, 300.0, 101325.0, &pp), TL_STATUS_INDEX_OUT_OF_RANGE,
               "component index 1", "stable phase of component 1 of water");
        CHECK(pp.gibbs == 42, "no phase point written on error");
        tl_triple_point tp{};
        expect(tl_pure_triple_point(water, 0, solids, 1, 1, nullptr, &tp), TL_STATUS_INDEX_OUT_OF_RANGE, "solid index 1",
               "triple point of a missing solid");
        expect(tl_pure_triple_point(water, 0, nullptr, 0, 0, nullptr, &tp), TL_STATUS_INDEX_OUT_OF_RANGE,
               "0 solids", "triple point without solids");
        double ts[3] = {263.15, 273.15, 283.15}, g[9], g_small[8];
        for (double& x : g) x = -7;
        expect(tl_pure_gibbs_curves_isobaric(water, 0, solids, 1, 101325.0, ts, 3, g_small, 8, nullptr, 0, nullptr),
               TL_STATUS_BUFFER_TOO_SMALL, "9 are required", "Gibbs curves into a short array");
        expect(tl_pure_gibbs_curves_isobaric(water, 0, solids, 1, 101325.0, nullptr, 3, g, 9, nullptr, 0, nullptr),
               TL_STATUS_NULL_POINTER, "temperatures", "NULL grid");
        double desc[3] = {283.15, 273.15, 263.15};
        expect(tl_pure_gibbs_curves_isobaric(water, 0, solids, 1, 101325.0, desc, 3, g, 9, nullptr, 0, nullptr),
               TL_STATUS_INVALID_INPUT, "ascending", "descending grid");
        tl_gibbs_crossing xs[1];
        size_t nx = 99;
        expect(tl_pure_gibbs_curves_isobaric(water, 0, solids, 1, 101325.0, ts, 3, g, 9, xs, 0, &nx),
               TL_STATUS_BUFFER_TOO_SMALL, "crossings", "no room for the crossing");
        CHECK(nx == 1, "the number of crossings is reported with a short crossings array");
        CHECK(g[0] == -7, "no curves written on a short crossings array");

        // Isothermal curves, one phase's state, traces, solid handles.
        double pgrid[3] = {1e5, 2e5, 3e5};
        expect(tl_pure_gibbs_curves_isothermal(water, 0, solids, 1, nan, pgrid, 3, g, 9, nullptr, 0, nullptr),
               TL_STATUS_INVALID_INPUT, "temperature", "isothermal curves at NaN T");
        expect(tl_pure_gibbs_curves_isothermal(water, 0, solids, 1, 300.0, nullptr, 3, g, 9, nullptr, 0, nullptr),
               TL_STATUS_NULL_POINTER, "pressures", "isothermal curves, NULL grid");
        bool ex = true;
        expect(tl_pure_phase_state(water, 0, solids, 1, TL_PURE_LIQUID, 300.0, 1e5, &pp, nullptr),
               TL_STATUS_NULL_POINTER, "exists", "phase state, NULL exists");
        expect(tl_pure_phase_state(water, 0, solids, 1, 5, 300.0, 1e5, &pp, &ex), TL_STATUS_INVALID_INPUT, "phase",
               "phase state, unknown phase code");
        CHECK(ex, "exists not written on error");
        tl_coexistence line[2];
        line[0].temperature = -1;
        double tgrid[2] = {300.0, 310.0};
        expect(tl_pure_trace(water, 0, solids, 1, TL_PURE_LIQUID, TL_PURE_VAPOR, TL_TRACE_TEMPERATURE, tgrid, 2,
                             nullptr, line, 1),
               TL_STATUS_BUFFER_TOO_SMALL, "out", "trace into a short array");
        double tbad[2] = {300.0, 700.0};
        expect(tl_pure_trace(water, 0, solids, 1, TL_PURE_LIQUID, TL_PURE_VAPOR, TL_TRACE_TEMPERATURE, tbad, 2,
                             nullptr, line, 2),
               TL_STATUS_NO_SOLUTION, "point 1", "trace past the critical point names the point");
        CHECK(line[0].temperature == -1, "no trace written when a point fails");
        const tl_solid* sc = reinterpret_cast<const tl_solid*>(0x10);
        expect(tl_solid_clone(nullptr, &sc), TL_STATUS_NULL_POINTER, "", "clone of NULL");
        expect(tl_solid_clone(reinterpret_cast<const tl_solid*>(water), &sc), TL_STATUS_INVALID_HANDLE, "solid",
               "clone of a model as a solid");
        CHECK(sc == reinterpret_cast<const tl_solid*>(0x10), "no clone written on error");
        char sbuf[3];
        size_t sneed = 0;
        expect(tl_solid_species(solids[0], sbuf, sizeof sbuf, &sneed), TL_STATUS_BUFFER_TOO_SMALL, "",
               "species into a short buffer");
        CHECK(sneed == 6, "species size reported");
        tl_fusion_data fd{216.592, 0.51795e6, 9.0e3, 27.0, 2.9e-5, 150.0, 200.0, 50e6};
        expect(tl_solid_fusion_new(water, 0, &fd, nullptr, &sc), TL_STATUS_INVALID_INPUT, "t_max",
               "fusion data whose range excludes the triple point");
        double tf = -1;
        double one_w[1] = {1.0};
        expect(tl_frost_point_temperature(water, solids[0], nan, one_w, 1, 260.0, nullptr, &tf),
               TL_STATUS_INVALID_INPUT, "pressure", "frost point at NaN p");
        expect(tl_frost_point_temperature(water, solids[0], 1e5, one_w, 1, 260.0, nullptr, nullptr),
               TL_STATUS_NULL_POINTER, "out", "frost point, NULL out");
        expect(tl_frost_point_temperature(m, solids[0], 1e5, z, 2, 260.0, nullptr, &tf), TL_STATUS_INVALID_INPUT,
               "water", "frost point of ice from a fluid without water");
        CHECK(tf == -1, "no frost point written on error");

        // The flash with solids.
        tl_solid_flash_summary sum{};
        sum.fluid_amount = -3;
        tl_solid_phase sp[1];
        double one[1] = {1.0};
        expect(tl_flash_with_solids(water, solids, 1, 260.0, 101325.0, one, 1, nullptr, r, nullptr, sp, 1),
               TL_STATUS_NULL_POINTER, "summary", "NULL summary");
        expect(tl_flash_with_solids(water, solids, 1, 260.0, 101325.0, one, 1, nullptr, r, &sum, sp, 0),
               TL_STATUS_BUFFER_TOO_SMALL, "phases", "no room for the solid");
        expect(tl_flash_with_solids(water, solids, 1, nan, 101325.0, one, 1, nullptr, r, &sum, sp, 1),
               TL_STATUS_INVALID_INPUT, "temperature", "flash with solids at NaN T");
        expect(tl_flash_with_solids(water, solids, 1, 260.0, 101325.0, one, 2, nullptr, r, &sum, sp, 1),
               TL_STATUS_INVALID_INPUT, "", "amounts of the wrong length");
        expect(tl_flash_with_solids(m, solids, 1, 260.0, 101325.0, z, 2, nullptr, r, &sum, sp, 1),
               TL_STATUS_INVALID_INPUT, "water", "ice with a fluid that has no water");
        expect(tl_flash_with_solids(water, wrong, 1, 260.0, 101325.0, one, 1, nullptr, r, &sum, sp, 1),
               TL_STATUS_INVALID_HANDLE, "solids[0]", "flash with a model passed as a solid");
        CHECK(sum.fluid_amount == -3, "no summary written on error");

        tl_solid_free(ice);
        tl_model_free(water);
    }

    // Version and status names never fail.
    CHECK(std::string(tl_status_name(TL_STATUS_PANIC)) == "TL_STATUS_PANIC", "status name");

    tl_model_free(m1);
    tl_result_free(r);
    tl_context_free(ctx);
    tl_model_free(m);
    return t::finish("test_bad_input");
}
