// The C++17 wrapper: RAII ownership, exceptions with status and message, the model
// constructors (names, JSON, component file and text), span inputs, batch output.
//
// usage: test_wrapper COMPONENTS_TOML
#include "check.hpp"
#include "tieline.hpp"

#include <array>
#include <fstream>
#include <sstream>

int main(int argc, char** argv) {
    if (argc != 2) {
        std::fprintf(stderr, "usage: %s COMPONENTS_TOML\n", argv[0]);
        return 2;
    }
    using namespace tieline;
    CHECK(version() == tl_version(), "version");

    Model m = Model::from_names({"methane", "ethane", "n-butane"}, CubicKind::SoaveRedlichKwong);
    CHECK(m.num_components() == 3 && m.component_name(2) == "n-butane", "model from names");
    const std::vector<double> z = {0.6, 0.25, 0.15};

    // Exceptions carry the status and the library's message.
    try {
        Model::from_names({"methane", "ethanee"});
        CHECK(false, "an unknown name throws");
    } catch (const Error& e) {
        CHECK(e.status() == TL_STATUS_UNKNOWN_COMPONENT, "status of an unknown name");
        CHECK(e.message().find("did you mean: ethane") != std::string::npos, "suggestion in the message");
        CHECK(std::string(e.what()).find("TL_STATUS_UNKNOWN_COMPONENT") == 0, "what() starts with the status");
    }
    try {
        Context c(m);
        c.flash(250.0, -1.0, z);
        CHECK(false, "a negative pressure throws");
    } catch (const Error& e) {
        CHECK(e.status() == TL_STATUS_INVALID_INPUT && e.message().find("pressure") != std::string::npos,
              "negative pressure: status and message");
    }

    // The same model four ways gives the same numbers.
    Model from_json = Model::from_json(m.to_json());
    Model from_file = Model::from_component_file(argv[1], {"methane", "ethane", "n-butane"}, CubicKind::SoaveRedlichKwong);
    std::ifstream f(argv[1]);
    std::stringstream ss;
    ss << f.rdbuf();
    Model from_text = Model::from_component_toml(ss.str(), {"C1", "C2", "nC4"}, CubicKind::SoaveRedlichKwong);
    Model described = Model::from_json(
        R"({"model": "cubic", "kind": "soave_redlich_kwong", "components": ["methane", "ethane", "n-butane"]})");
    std::string ref = m.flash(250.0, 3.0e6, z).to_json();
    for (const Model* other : {&from_json, &from_file, &from_text, &described})
        CHECK(other->flash(250.0, 3.0e6, z).to_json() == ref, "identical flash from an equivalent model");

    // Copies share the model and outlive the original; moves leave an empty handle.
    Model copy = m;
    {
        Model tmp = Model::from_names({"nitrogen"});
        copy = tmp;
    }
    CHECK(copy.num_components() == 1 && copy.component_name(0) == "nitrogen", "copy outlives its source");
    Model moved = std::move(copy);
    CHECK(moved.num_components() == 1, "moved model works");

    // Contexts and results: pointer + length, std::array, initializer list.
    Context ctx(m);
    Result r;
    ctx.flash(250.0, 3.0e6, Span(z.data(), z.size()), r);
    CHECK(r.num_phases() == 2, "two phases");
    std::array<double, 3> za = {0.6, 0.25, 0.15};
    ctx.flash(250.5, 3.0e6, za, r);
    CHECK(r.diagnostics().warm_start, "warm start through the wrapper");
    Result r2 = ctx.flash(251.0, 3.0e6, {0.6, 0.25, 0.15});
    CHECK(r2.kind() == TL_RESULT_KIND_FLASH && r2.temperature() == 251.0 && r2.pressure() == 3.0e6, "new result");
    Result r3 = std::move(r2);
    CHECK(r3.num_phases() == 2, "moved result");
    double buf[3];
    r3.composition(0, buf, 3);
    CHECK(buf[0] == r3.composition(0)[0], "composition into a caller buffer");
    tl_properties pv = r3.phase_properties(m, 0);
    CHECK(pv.kind == TL_PHASE_KIND_VAPOR && pv.speed_of_sound > 200, "vapour properties");
    tl_mixture_properties mp = r3.mixture_properties(m);
    CHECK(mp.mass > 0 && mp.mass_density > 0, "mixture properties");

    // Stability, saturation, bubble/dew, properties.
    Result st = m.stability(250.0, 3.0e6, z);
    double tpd = 0;
    auto w = st.stationary_point(0, &tpd);
    CHECK(!st.stability().stable && tpd < 0 && w.size() == 3, "stability through the wrapper");
    tl_saturation_point sp = m.saturation_pressure(2, 300.0);
    CHECK(sp.pressure > 2e5 && sp.pressure < 3.5e5, "n-butane vapour pressure at 300 K");
    BubbleDew bd = m.dew_temperature(3.0e6, z);
    CHECK(bd.point.temperature > 250.0 && bd.incipient.size() == 3, "dew temperature");
    std::vector<double> lp;
    tl_properties pl = m.properties(200.0, 3.0e6, z, Root::Liquid, &lp);
    CHECK(pl.kind == TL_PHASE_KIND_LIQUID && lp.size() == 3, "liquid-root properties with ln phi");

    // Batch.
    std::vector<double> T = {230, 240, 250, 260, 270};
    std::vector<double> P(T.size(), 3.0e6);
    BatchResult b = m.flash_batch(T, P, z, 2);
    bool all_ok = true;
    for (size_t i = 0; i < T.size(); ++i) all_ok = all_ok && b.status[i] == TL_STATUS_OK;
    CHECK(all_ok && b.num_phases[2] == 2, "batch");
    Result one = m.flash(250, 3.0e6, z);
    CHECK(t::same(b.phase_fraction[2 * 2 + 0], one.phase(0).fraction) || b.phase_fraction[4] > 0,
          "batch fractions filled");

    // Solids and pure substances: RAII, exceptions with status, the flash with solids.
    {
        Model water = Model::from_json("{\"model\": \"iapws95\"}");
        Solid ice = Solid::ice_ih();
        Solid moved = std::move(ice);
        CHECK(ice.get() == nullptr && moved.get() != nullptr, "a moved solid owns nothing");
        PureSubstance set(water, 0, {&moved});
        // IAPWS R10-06(2009): normal melting point 273.152519 K.
        tl_coexistence mt = set.coexistence_temperature(TL_PURE_SOLID, TL_PURE_LIQUID, 101325.0);
        CHECK(std::fabs(mt.temperature - 273.152519) < 1e-6, "wrapper: normal melting point");
        // IAPWS R6-95(2018) Table 8: p_sat(450 K) = 0.932203564 MPa; from a guess of 1 MPa.
        double guess = 1e6;
        tl_coexistence sat = set.coexistence_pressure(TL_PURE_LIQUID, TL_PURE_VAPOR, 450.0, &guess);
        CHECK(std::fabs(sat.pressure / 0.932203564e6 - 1) < 1e-8, "wrapper: p_sat(450 K)");
        try {
            set.coexistence_temperature(TL_PURE_SOLID + 3, TL_PURE_LIQUID, 101325.0);
            CHECK(false, "an unknown solid throws");
        } catch (const Error& e) {
            CHECK(e.status() == TL_STATUS_INDEX_OUT_OF_RANGE, "status of an unknown solid");
        }
        // Pure CO2 at 101325 Pa and 180 K, below its normal sublimation temperature 194.686 K
        // (Span & Wagner 1996): the feed is all dry ice and no fluid remains.
        Model co2 = Model::from_names({"carbon dioxide"});
        Solid dry = Solid::carbon_dioxide(co2, 0);
        Result fluid = co2.flash(300.0, 101325.0, {1.0});
        SolidFlash r = flash_with_solids(co2, {&dry}, 180.0, 101325.0, {2.0}, fluid);
        CHECK(r.solids[0].present && std::fabs(r.solids[0].amount - 2.0) < 1e-15 && r.summary.fluid_amount == 0,
              "pure CO2 at 180 K is solid");
        tl_result_kind kind;
        CHECK(tl_result_kind_of(fluid.get(), &kind) == TL_STATUS_OK && kind == TL_RESULT_KIND_EMPTY,
              "the fluid result is emptied when nothing is fluid");
        // At 300 K the dry-ice model (150-260 K) is not evaluated and the feed stays fluid.
        r = flash_with_solids(co2, {&dry}, 300.0, 101325.0, {2.0}, fluid);
        CHECK(!r.solids[0].present && !r.solids[0].evaluated && r.summary.fluid_amount == 2.0 &&
                  fluid.num_phases() == 1,
              "pure CO2 at 300 K is fluid");
        // The sublimation temperature at 101325 Pa lies between 180 and 300 K (194.686 K,
        // Span & Wagner 1996; the fusion-data solid on Peng-Robinson is checked to 0.5 K).
        tl_coexistence sub = PureSubstance(co2, 0, {&dry}).coexistence_temperature(TL_PURE_SOLID, TL_PURE_VAPOR,
                                                                                   101325.0);
        CHECK(std::fabs(sub.temperature - 194.686) < 0.5, "CO2 sublimation at 101325 Pa: " + t::num(sub.temperature));
    }

    // Calculations by name: a plan run twice through a workspace, read as a record.
    {
        Plan plan("flash_pt", "{\"tolerance\": 1e-11}");
        Workspace ws;
        Record r = plan.run(m, {250.0, 2.0e6}, z, &ws);
        CHECK(r.kind() == "flash_pt" && r.number("num_phases") >= 1, "record of a plan");
        CHECK(r.unit("pressure") == "Pa" && r.fields().front() == "temperature", "fields and units");
        size_t rows = 0, cols = 0;
        std::vector<double> x = r.numbers("compositions", &rows, &cols);
        CHECK(cols == 3 && x.size() == rows * cols, "a table with its shape");
        plan.run_into(r, m, {251.0, 2.0e6}, z, &ws);
        CHECK(r.text("warm_start") == "true", "the second point is warm-started");
        try {
            Plan bad("flash_pt", "{\"tolerence\": 1}");
            CHECK(false, "a misspelt option throws");
        } catch (const Error& e) {
            CHECK(e.status() == TL_STATUS_INVALID_INPUT && e.message().find("tolerance") != std::string::npos,
                  "the message lists the options");
        }
    }

    return t::finish("test_wrapper");
}
