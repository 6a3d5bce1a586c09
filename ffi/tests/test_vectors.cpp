// The shared test vectors (tests/vectors/cases.json) through the C ABI: the expected values
// with the tolerances of the file, and bit-for-bit equality with the Rust results of the same
// calls (written by the tieline-ffi-reference program).
//
// usage: test_vectors CASES_JSON REFERENCE_JSON
#include "check.hpp"
#include "json.hpp"
#include "tieline.hpp"

#include <cstdio>
#include <string>
#include <vector>

using tieline::Model;
using tieline::Result;

static tl_status status_of(const json::Value& rec) { return tl_status(uint32_t(rec["status"].number())); }

// Compares a C flash result with a Rust reference record, field by field and as JSON text.
static void same_flash(const std::string& id, const Result& r, const json::Value& ref) {
    CHECK(r.num_phases() == ref["phases"].size(), id + ": number of phases");
    size_t np = std::min(r.num_phases(), ref["phases"].size());
    for (size_t k = 0; k < np; ++k) {
        const auto& rp = ref["phases"][k];
        tl_phase_info ph = r.phase(k);
        std::string w = id + " phase " + std::to_string(k);
        CHECK(uint32_t(ph.kind) == uint32_t(rp["kind"].number()), w + " kind");
        CHECK_SAME(ph.amount, rp["amount"].number(), w + " amount");
        CHECK_SAME(ph.fraction, rp["fraction"].number(), w + " fraction");
        CHECK_SAME(ph.molar_volume, rp["molar_volume"].number(), w + " molar volume");
        CHECK_SAME(ph.z, rp["z"].number(), w + " Z");
        auto x = r.composition(k);
        auto lp = r.ln_phi(k);
        auto rx = rp["composition"].numbers();
        auto rl = rp["ln_phi"].numbers();
        for (size_t i = 0; i < x.size() && i < rx.size(); ++i) {
            CHECK_SAME(x[i], rx[i], w + " x" + std::to_string(i));
            CHECK_SAME(lp[i], rl[i], w + " ln phi" + std::to_string(i));
        }
    }
    tl_diagnostics d = r.diagnostics();
    CHECK_SAME(d.residual, ref["residual"].number(), id + " residual");
    CHECK_SAME(d.certificate, ref["certificate"].number(), id + " certificate");
    CHECK_SAME(d.gibbs, ref["gibbs"].number(), id + " G/RT");
    CHECK(d.ss_iterations == size_t(ref["ss_iterations"].number()), id + " SS iterations");
    CHECK(d.newton_iterations == size_t(ref["newton_iterations"].number()), id + " Newton iterations");
    CHECK(d.stability_iterations == size_t(ref["stability_iterations"].number()), id + " stability iterations");
    CHECK(d.warm_start == ref["warm_start"].b, id + " warm start");
    CHECK(r.to_json() == ref["json"].str, id + " JSON text identical");
}

static void expected_flash(const json::Value& c, const Result& r) {
    const std::string id = c["id"].str;
    const auto& e = c["expected"];
    double tol = e["tolerance"].number();
    CHECK(r.num_phases() == size_t(e["phases"].number()), id + ": phases");
    for (size_t k = 0; k < r.num_phases() && k < e["fractions"].size(); ++k) {
        double f = r.phase(k).fraction;
        CHECK(std::fabs(f - e["fractions"][k].number()) < tol, id + ": fraction " + t::num(f));
        auto x = r.composition(k);
        for (size_t i = 0; i < x.size(); ++i)
            CHECK(std::fabs(x[i] - e["compositions"][k][i].number()) < tol, id + ": x " + t::num(x[i]));
    }
    tl_diagnostics d = r.diagnostics();
    if (e.has("gibbs"))
        CHECK(std::fabs(d.gibbs - e["gibbs"].number()) < e["gibbs_tolerance"].number(), id + ": G/RT");
    CHECK(d.residual < 1e-10, id + ": residual");
    CHECK(d.has_certificate && d.certificate >= -1e-10, id + ": certificate");
}

template <class F> static tl_status status_of_call(F&& f) {
    try {
        f();
        return TL_STATUS_OK;
    } catch (const tieline::Error& e) {
        return e.status();
    }
}

int main(int argc, char** argv) {
    if (argc != 3) {
        std::fprintf(stderr, "usage: %s CASES_JSON REFERENCE_JSON\n", argv[0]);
        return 2;
    }
    json::Value cases = json::parse_file(argv[1]);
    json::Value ref = json::parse_file(argv[2]);
    auto model = [](const json::Value& c) { return Model::from_json(c["model"].raw); };

    // Stability verdicts.
    for (size_t k = 0; k < cases["stability"].size(); ++k) {
        const auto& c = cases["stability"][k];
        const auto& rr = ref["stability"][k]["result"];
        const std::string id = c["id"].str;
        Model m = model(c);
        Result r = m.stability(c["temperature"].number(), c["pressure"].number(), c["feed"].numbers());
        tl_stability_summary s = r.stability();
        CHECK(s.stable == c["expected"]["stable"].b, id + ": verdict");
        if (c["expected"].has("min_tpd"))
            CHECK(std::fabs(s.min_tpd - c["expected"]["min_tpd"].number()) < c["expected"]["tpd_tolerance"].number(),
                  id + ": min tpd " + t::num(s.min_tpd));
        CHECK(s.stable == rr["stable"].b, id + ": verdict as Rust");
        CHECK_SAME(s.min_tpd, rr["min_tpd"].number(), id + ": min tpd as Rust");
        CHECK(s.num_points == size_t(rr["num_points"].number()), id + ": points as Rust");
        CHECK(s.iterations == size_t(rr["iterations"].number()), id + ": iterations as Rust");
        CHECK(r.to_json() == rr["json"].str, id + ": JSON as Rust");
    }

    // Flashes: one-shot, then a warm-started sequence through one context.
    tl_flash_options opts = tieline::default_flash_options();
    for (size_t k = 0; k < cases["flash"].size(); ++k) {
        const auto& c = cases["flash"][k];
        const std::string id = c["id"].str;
        Model m = model(c);
        double T = c["temperature"].number(), p = c["pressure"].number();
        auto z = c["feed"].numbers();
        Result r = m.flash(T, p, z, &opts);
        expected_flash(c, r);
        same_flash(id + " one-shot", r, ref["flash"][k]["result"]);

        const auto& w = ref["warm"][k];
        tieline::Context ctx(m);
        Result rr; // reused across the steps
        for (size_t s = 0; s < size_t(w["steps"].number()); ++s) {
            double Ts = T + w["step"].number() * double(s);
            const auto& rec = w["results"][s];
            tl_status st = status_of_call([&] { ctx.flash(Ts, p, z, rr, &opts); });
            CHECK(st == status_of(rec), id + " warm step " + std::to_string(s) + ": status " + tl_status_name(st));
            if (st == TL_STATUS_OK && status_of(rec) == TL_STATUS_OK)
                same_flash(id + " warm step " + std::to_string(s), rr, rec);
        }

        // Bubble and dew points of the same feed (status and values as Rust).
        const auto& bd = ref["bubble_dew"][k];
        struct Call {
            const char* name;
            tieline::BubbleDew (Model::*f)(double, tieline::Span, const tl_saturation_options*) const;
            double spec;
        } calls[] = {{"bubble_pressure", &Model::bubble_pressure, T},
                     {"dew_pressure", &Model::dew_pressure, T},
                     {"bubble_temperature", &Model::bubble_temperature, p},
                     {"dew_temperature", &Model::dew_temperature, p}};
        for (const auto& call : calls) {
            const auto& rec = bd[call.name];
            tieline::BubbleDew out{};
            tl_status st = status_of_call([&] { out = (m.*call.f)(call.spec, z, nullptr); });
            std::string what = id + " " + call.name;
            CHECK(st == status_of(rec), what + ": status " + tl_status_name(st));
            if (st == TL_STATUS_OK && status_of(rec) == TL_STATUS_OK) {
                CHECK_SAME(out.point.temperature, rec["temperature"].number(), what + " T");
                CHECK_SAME(out.point.pressure, rec["pressure"].number(), what + " p");
                CHECK_SAME(out.point.residual, rec["residual"].number(), what + " residual");
                auto inc = rec["incipient"].numbers();
                for (size_t i = 0; i < inc.size(); ++i) CHECK_SAME(out.incipient[i], inc[i], what + " incipient");
            }
        }
    }

    // Volume roots and properties of pure components.
    for (size_t k = 0; k < cases["volumes"].size(); ++k) {
        const auto& c = cases["volumes"][k];
        const auto& rr = ref["volumes"][k];
        const std::string id = c["id"].str;
        Model m = model(c);
        double T = c["temperature"].number(), p = c["pressure"].number();
        auto n = c["feed"].numbers();
        double tol = c["expected"]["rel_tolerance"].number();
        struct R {
            const char* key;
            const char* expected;
            tieline::Root root;
        } roots[] = {{"vapor", "vapor_molar_volume", tieline::Root::Vapor},
                     {"liquid", "liquid_molar_volume", tieline::Root::Liquid},
                     {"stable", nullptr, tieline::Root::Stable}};
        for (const auto& ro : roots) {
            const auto& rec = rr[ro.key];
            std::vector<double> lp;
            tl_properties pr{};
            tl_status st = status_of_call([&] { pr = m.properties(T, p, n, ro.root, &lp); });
            std::string what = id + " " + ro.key;
            CHECK(st == status_of(rec), what + ": status " + tl_status_name(st));
            if (st != TL_STATUS_OK) continue;
            if (ro.expected) {
                double want = c["expected"][ro.expected].number();
                CHECK(std::fabs(pr.molar_volume - want) / want < tol, what + ": v " + t::num(pr.molar_volume));
            }
            CHECK(uint32_t(pr.kind) == uint32_t(rec["kind"].number()), what + " kind");
            CHECK_SAME(pr.molar_volume, rec["molar_volume"].number(), what + " v");
            CHECK_SAME(pr.z, rec["z"].number(), what + " Z");
            CHECK_SAME(pr.enthalpy, rec["enthalpy"].number(), what + " h");
            CHECK_SAME(pr.entropy, rec["entropy"].number(), what + " s");
            CHECK_SAME(pr.gibbs, rec["gibbs"].number(), what + " g");
            CHECK_SAME(pr.cp, rec["cp"].number(), what + " cp");
            CHECK_SAME(pr.cv, rec["cv"].number(), what + " cv");
            CHECK_SAME(pr.speed_of_sound, rec["speed_of_sound"].number(), what + " w");
            CHECK_SAME(pr.joule_thomson, rec["joule_thomson"].number(), what + " mu_JT");
            CHECK_SAME(lp[0], rec["ln_phi"][0].number(), what + " ln phi");
        }
    }

    // Vapour pressures against experiment, and the boiling temperature back from them.
    for (size_t k = 0; k < cases["saturation"].size(); ++k) {
        const auto& c = cases["saturation"][k];
        const auto& rr = ref["saturation"][k]["result"];
        const std::string id = c["id"].str;
        Model m = model(c);
        size_t comp = size_t(c["component"].number());
        tl_saturation_point s = m.saturation_pressure(comp, c["temperature"].number());
        double want = c["expected"]["pressure"].number();
        CHECK(std::fabs(s.pressure - want) / want < c["expected"]["rel_tolerance"].number(),
              id + ": p_sat " + t::num(s.pressure));
        CHECK_SAME(s.pressure, rr["pressure"].number(), id + ": p_sat as Rust");
        CHECK_SAME(s.liquid_molar_volume, rr["liquid_molar_volume"].number(), id + ": v_L as Rust");
        CHECK_SAME(s.vapor_molar_volume, rr["vapor_molar_volume"].number(), id + ": v_V as Rust");
        CHECK_SAME(s.enthalpy_of_vaporization, rr["enthalpy_of_vaporization"].number(), id + ": dh_vap as Rust");
        CHECK(s.iterations == size_t(rr["iterations"].number()), id + ": iterations as Rust");
        const auto& b = rr["boiling"];
        tl_saturation_point tb{};
        tl_status st = status_of_call([&] { tb = m.saturation_temperature(comp, s.pressure); });
        CHECK(st == status_of(b), id + ": boiling status");
        if (st == TL_STATUS_OK && status_of(b) == TL_STATUS_OK) {
            CHECK_SAME(tb.temperature, b["temperature"].number(), id + ": T_b as Rust");
            CHECK(std::fabs(tb.temperature - c["temperature"].number()) < 1e-6, id + ": T_b round trip");
        }
    }

    // Pure water (IAPWS-95 with IAPWS-06 ice Ih): the file's expected values with its
    // tolerances, and bit-for-bit equality with the Rust calls.
    {
        Model water = Model::from_json("{\"model\": \"iapws95\"}");
        tieline::Solid ice = tieline::Solid::ice_ih();
        tieline::PureSubstance set(water, 0, {&ice});
        auto same_point = [](const tl_pure_phase_point& a, const json::Value& r, const std::string& w) {
            CHECK_SAME(a.gibbs, r["gibbs"].number(), w + " g");
            CHECK_SAME(a.enthalpy, r["enthalpy"].number(), w + " h");
            CHECK_SAME(a.entropy, r["entropy"].number(), w + " s");
            CHECK_SAME(a.molar_volume, r["molar_volume"].number(), w + " v");
        };
        auto same_coex = [&](const tl_coexistence& c, const json::Value& r, const std::string& w) {
            CHECK(status_of(r) == TL_STATUS_OK, w + ": Rust status");
            CHECK_SAME(c.temperature, r["temperature"].number(), w + " T");
            CHECK_SAME(c.pressure, r["pressure"].number(), w + " p");
            same_point(c.a, r["a"], w + " a");
            same_point(c.b, r["b"], w + " b");
            CHECK_SAME(c.delta_h, r["delta_h"].number(), w + " dh");
            CHECK_SAME(c.clapeyron_slope, r["clapeyron_slope"].number(), w + " dp/dT");
            CHECK(c.iterations == size_t(r["iterations"].number()), w + " iterations");
        };
        size_t checked = 0;
        for (size_t k = 0; k < cases["water"].size(); ++k) {
            const auto& c = cases["water"][k];
            const auto& rr = ref["water"][k]["result"];
            const std::string id = c["id"].str, kind = c["kind"].str;
            CHECK(ref["water"][k]["id"].str == id, id + ": reference in step");
            if (kind == "saturation_t") {
                tl_coexistence s = set.coexistence_pressure(TL_PURE_LIQUID, TL_PURE_VAPOR, c["temperature"].number());
                double want = c["expected"]["pressure"].number();
                CHECK(std::fabs(s.pressure - want) / want < c["rel_tolerance"].number(),
                      id + ": p_sat " + t::num(s.pressure));
                same_coex(s, rr, id);
                ++checked;
            } else if (kind == "melting_p") {
                double p = c["pressure"].number();
                tl_coexistence mt = set.coexistence_temperature(TL_PURE_SOLID, TL_PURE_LIQUID, p);
                CHECK(std::fabs(mt.temperature - c["expected"]["temperature"].number()) < c["abs_tolerance"].number(),
                      id + ": T_melt " + t::num(mt.temperature));
                same_coex(mt, rr["melting"], id + " melting");
                const std::pair<const char*, double> probes[] = {{"stable_263", 263.15}, {"stable_283", 283.15}};
                for (const auto& [key, T] : probes) {
                    tl_pure_phase_point st = set.stable_phase(T, p);
                    CHECK(st.phase == uint32_t(rr[key]["phase"].number()), id + " " + key + " phase");
                    CHECK_SAME(st.gibbs, rr[key]["gibbs"].number(), id + " " + key + " g");
                }
                const auto& rc = rr["curves"];
                auto ts = rc["temperatures"].numbers();
                tieline::GibbsCurves g = set.gibbs_curves_isobaric(p, ts);
                for (size_t row = 0; row < 3; ++row)
                    for (size_t i = 0; i < ts.size(); ++i) {
                        const auto& v = rc["gibbs"][row][i];
                        std::string w = id + " curve " + std::to_string(row) + " point " + std::to_string(i);
                        if (v.type == json::Value::Null)
                            CHECK(std::isnan(g.g(row, i)), w + ": NaN where the phase does not exist");
                        else
                            CHECK_SAME(g.g(row, i), v.number(), w);
                    }
                CHECK(g.crossings.size() == rc["crossings"].size(), id + ": crossings");
                for (size_t i = 0; i < g.crossings.size() && i < rc["crossings"].size(); ++i) {
                    CHECK_SAME(g.crossings[i].point.temperature, rc["crossings"][i]["temperature"].number(),
                               id + " crossing T");
                    CHECK_SAME(g.crossings[i].gibbs, rc["crossings"][i]["gibbs"].number(), id + " crossing g");
                    CHECK(g.crossings[i].stable == rc["crossings"][i]["stable"].b, id + " crossing stable");
                    // The stable crossing on this grid is the melting point (R10-06: 273.152519 K).
                    CHECK(std::fabs(g.crossings[i].point.temperature - 273.152519) < 1e-6, id + ": crossing at T_melt");
                }
                ++checked;
            } else if (kind == "triple_point") {
                tl_triple_point tp = set.triple_point(0);
                const auto& e = c["expected"];
                CHECK(std::fabs(tp.temperature - e["temperature"].number()) < c["abs_tolerance"]["temperature"].number(),
                      id + ": T " + t::num(tp.temperature));
                CHECK(std::fabs(tp.pressure - e["pressure"].number()) < c["abs_tolerance"]["pressure"].number(),
                      id + ": p " + t::num(tp.pressure));
                CHECK_SAME(tp.temperature, rr["temperature"].number(), id + " T as Rust");
                CHECK_SAME(tp.pressure, rr["pressure"].number(), id + " p as Rust");
                CHECK_SAME(tp.residual, rr["residual"].number(), id + " residual as Rust");
                CHECK(tp.iterations == size_t(rr["iterations"].number()), id + " iterations as Rust");
                same_point(tp.solid, rr["solid"], id + " solid");
                ++checked;
            }
        }
        CHECK(checked >= 5, "water section: saturation, melting and triple-point cases present");
    }

    // CO2 freeze-out from methane through the C ABI, as the Rust flash with solids.
    {
        const auto& sf = ref["solid_flash"];
        const auto& rr = sf["result"];
        std::vector<std::string> names;
        for (const auto& n : sf["names"].arr) names.push_back(n.str);
        Model m = Model::from_names(names);
        tieline::Solid dry = tieline::Solid::carbon_dioxide(m, 1);
        Result fluid;
        auto z = sf["feed"].numbers();
        tieline::SolidFlash r =
            tieline::flash_with_solids(m, {&dry}, sf["temperature"].number(), sf["pressure"].number(), z, fluid);
        CHECK(status_of(rr) == TL_STATUS_OK, "solid flash: Rust status");
        CHECK(r.solids.size() == 1 && r.solids[0].present && r.summary.num_solids_present == 1, "dry ice present");
        CHECK_SAME(r.solids[0].amount, rr["solid_amount"].number(), "solid flash: amount as Rust");
        CHECK_SAME(r.solids[0].margin, rr["margin"].number(), "solid flash: margin as Rust");
        CHECK_SAME(r.solids[0].ln_fugacity_solid, rr["ln_fugacity_solid"].number(), "solid flash: ln f_s as Rust");
        CHECK_SAME(r.solids[0].ln_fugacity_fluid, rr["ln_fugacity_fluid"].number(), "solid flash: ln f_fluid as Rust");
        CHECK_SAME(r.summary.residual, rr["residual"].number(), "solid flash: residual as Rust");
        CHECK(r.summary.fluid_flashes == size_t(rr["fluid_flashes"].number()), "solid flash: fluid flashes as Rust");
        same_flash("solid flash: fluid part", fluid, rr["fluid"]);
        // Conservation of CO2: the solid plus the CO2 left in the fluid equal the feed.
        double fluid_co2 = 0;
        for (size_t k = 0; k < fluid.num_phases(); ++k)
            fluid_co2 += fluid.phase(k).amount * fluid.composition(k)[1];
        CHECK(std::fabs(r.solids[0].amount + fluid_co2 - z[1]) < 1e-14, "solid flash: CO2 balance");
        CHECK(std::fabs(r.solids[0].margin) < 1e-9, "solid flash: a present solid has zero margin (tolerance 1e-9)");

        // The frost point of the same gas, as Rust; the solid flash just above it holds no
        // dry ice and just below it some (a consistency check of the two solvers).
        const auto& fr = sf["frost_point"];
        CHECK(status_of(fr) == TL_STATUS_OK, "frost point: Rust status");
        double tf = tieline::frost_point_temperature(m, dry, sf["pressure"].number(), z, sf["frost_guess"].number());
        CHECK_SAME(tf, fr["temperature"].number(), "frost point as Rust");
        Result above, below;
        auto ra = tieline::flash_with_solids(m, {&dry}, tf + 0.01, sf["pressure"].number(), z, above);
        auto rb = tieline::flash_with_solids(m, {&dry}, tf - 0.01, sf["pressure"].number(), z, below);
        CHECK(!ra.solids[0].present && rb.solids[0].present, "no dry ice 0.01 K above the frost point, some below");
    }

    // Batch sweep on one and two threads, as the Rust batch on the same thread counts.
    {
        const auto& b = ref["batch"];
        const json::Value* bc = nullptr;
        for (auto& c : cases["flash"].arr)
            if (c["id"].str == b["case"].str) bc = &c;
        CHECK(bc != nullptr, "batch case present");
        if (bc) {
            Model m = model(*bc);
            auto temps = b["temperatures"].numbers();
            std::vector<double> press(temps.size(), b["pressure"].number());
            auto z = (*bc)["feed"].numbers();
            for (const auto& run : b["runs"].arr) {
                size_t threads = size_t(run["threads"].number());
                tieline::BatchResult br = m.flash_batch(temps, press, z, threads, 2, &opts);
                for (size_t i = 0; i < temps.size(); ++i) {
                    const auto& rec = run["results"][i];
                    std::string what = "batch/" + std::to_string(threads) + " point " + std::to_string(i);
                    CHECK(br.status[i] == status_of(rec), what + ": status");
                    if (br.status[i] != TL_STATUS_OK) continue;
                    CHECK(br.num_phases[i] == rec["phases"].size(), what + ": phases");
                    for (size_t k = 0; k < br.num_phases[i]; ++k) {
                        const auto& rp = rec["phases"][k];
                        CHECK_SAME(br.phase_fraction[i * 2 + k], rp["fraction"].number(), what + " fraction");
                        CHECK_SAME(br.phase_molar_volume[i * 2 + k], rp["molar_volume"].number(), what + " v");
                        auto rx = rp["composition"].numbers();
                        for (size_t c = 0; c < rx.size(); ++c)
                            CHECK_SAME(br.composition(i, k, c), rx[c], what + " x");
                    }
                    for (size_t k = br.num_phases[i]; k < 2; ++k)
                        CHECK(br.phase_kind[i * 2 + k] == TL_PHASE_KIND_NONE && std::isnan(br.phase_fraction[i * 2 + k]),
                              what + ": unused slot");
                }
            }
        }
    }
    return t::finish("test_vectors");
}
