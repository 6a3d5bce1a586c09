/* The C ABI from plain C11: models, contexts, results, accessors, JSON, errors, versions.
 * Built twice: against the shared library and against the static library. */
#include "tieline.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int passed = 0, failed = 0;
#define CHECK(cond, what)                                                           \
  do {                                                                              \
    if (cond) {                                                                     \
      ++passed;                                                                     \
    } else {                                                                        \
      ++failed;                                                                     \
      fprintf(stderr, "%s:%d: FAILED: %s\n", __FILE__, __LINE__, what);            \
    }                                                                               \
  } while (0)
#define OK(call) CHECK((call) == TL_STATUS_OK, #call)

static void last_error(char *buf, size_t len) {
  size_t needed = 0;
  tl_last_error_message(buf, len, &needed);
}

int main(void) {
  char msg[512];
  char version[32];
  snprintf(version, sizeof version, "%d.%d.%d", TL_VERSION_MAJOR, TL_VERSION_MINOR, TL_VERSION_PATCH);
  CHECK(strcmp(tl_version(), version) == 0, "tl_version() matches the header macros");
  CHECK(tl_version_number() == (uint32_t)TL_VERSION_NUMBER, "tl_version_number() == TL_VERSION_NUMBER");
#ifdef TL_EXPECTED_VERSION
  CHECK(strcmp(version, TL_EXPECTED_VERSION) == 0, "header version matches Cargo.toml");
  {
    unsigned ma = 0, mi = 0, pa = 0;
    sscanf(TL_EXPECTED_VERSION, "%u.%u.%u", &ma, &mi, &pa);
    CHECK((uint32_t)TL_VERSION_NUMBER == ((ma << 16) | (mi << 8) | pa), "TL_VERSION_NUMBER combines Cargo.toml's parts");
    CHECK(TL_VERSION_MAJOR == (int)ma && TL_VERSION_MINOR == (int)mi && TL_VERSION_PATCH == (int)pa,
          "each version macro matches Cargo.toml");
  }
#endif
  CHECK(strcmp(tl_status_name(TL_STATUS_NULL_POINTER), "TL_STATUS_NULL_POINTER") == 0, "status name");
  CHECK(strcmp(tl_status_name(12345), "TL_STATUS_UNKNOWN") == 0, "unknown status name");

  /* A model from names in the embedded bank. */
  const char *names[] = {"methane", "n-butane"};
  const tl_model *model = NULL;
  OK(tl_model_new(names, 2, TL_CUBIC_PENG_ROBINSON, &model));
  size_t nc = 0;
  OK(tl_model_num_components(model, &nc));
  CHECK(nc == 2, "two components");
  char name[64];
  size_t needed = 0;
  OK(tl_model_component_name(model, 1, name, sizeof name, &needed));
  CHECK(strcmp(name, "n-butane") == 0 && needed == strlen("n-butane") + 1, "component name and size");
  CHECK(tl_model_component_name(model, 1, name, 3, &needed) == TL_STATUS_BUFFER_TOO_SMALL && needed == 9,
        "short buffer reports the size needed");
  double mm = 0;
  OK(tl_model_molar_mass(model, 0, &mm));
  CHECK(fabs(mm - 16.043e-3) < 1e-5, "molar mass of methane, kg/mol");

  /* Model JSON round trip. */
  CHECK(tl_model_to_json(model, NULL, 0, &needed) == TL_STATUS_BUFFER_TOO_SMALL, "model JSON size query");
  char *mjson = malloc(needed);
  OK(tl_model_to_json(model, mjson, needed, &needed));
  const tl_model *model2 = NULL;
  OK(tl_model_from_json(mjson, &model2));
  free(mjson);

  /* A flash through a context, and the same one-shot: the same numbers. */
  tl_context *ctx = NULL;
  tl_result *res = NULL, *res2 = NULL;
  OK(tl_context_new(model, &ctx));
  OK(tl_result_new(&res));
  OK(tl_result_new(&res2));
  tl_result_kind kind = TL_RESULT_KIND_FLASH;
  OK(tl_result_kind_of(res, &kind));
  CHECK(kind == TL_RESULT_KIND_EMPTY, "a new result is empty");
  size_t np = 0;
  CHECK(tl_result_num_phases(res, &np) == TL_STATUS_WRONG_RESULT_KIND, "accessor on an empty result");
  double z[2] = {0.5, 0.5};
  OK(tl_context_flash(ctx, 300.0, 5.0e6, z, 2, NULL, res));
  OK(tl_flash(model2, 300.0, 5.0e6, z, 2, NULL, res2));
  OK(tl_result_kind_of(res, &kind));
  CHECK(kind == TL_RESULT_KIND_FLASH, "kind flash");
  OK(tl_result_num_phases(res, &np));
  CHECK(np == 2, "two phases at 300 K, 50 bar");
  tl_phase_info v, l, v2;
  OK(tl_result_phase(res, 0, &v));
  OK(tl_result_phase(res, 1, &l));
  OK(tl_result_phase(res2, 0, &v2));
  CHECK(v.kind == TL_PHASE_KIND_VAPOR && l.kind == TL_PHASE_KIND_LIQUID, "vapour first, then liquid");
  CHECK(v.fraction == v2.fraction && v.molar_volume == v2.molar_volume, "context and one-shot agree exactly");
  CHECK(fabs(v.fraction + l.fraction - 1.0) < 1e-12, "fractions sum to one");
  double y[2], x[2];
  OK(tl_result_phase_composition(res, 0, y, 2));
  OK(tl_result_phase_composition(res, 1, x, 2));
  CHECK(y[0] > z[0] && x[0] < z[0], "methane enriches the vapour");
  CHECK(tl_result_phase_composition(res, 0, y, 1) == TL_STATUS_BUFFER_TOO_SMALL, "short composition buffer");
  CHECK(tl_result_phase(res, 2, &v) == TL_STATUS_INDEX_OUT_OF_RANGE, "phase index out of range");
  double beta = 0;
  OK(tl_result_vapor_fraction(res, &beta));
  CHECK(beta == v.fraction, "vapour fraction");
  double T = 0, p = 0;
  OK(tl_result_conditions(res, &T, &p));
  CHECK(T == 300.0 && p == 5.0e6, "conditions");
  tl_diagnostics d;
  OK(tl_result_diagnostics(res, &d));
  CHECK(d.has_certificate && d.certificate >= -1e-10, "certified minimum");
  CHECK(d.residual < 1e-10, "converged");
  tl_properties pr;
  OK(tl_result_phase_properties(res, model, 1, &pr));
  CHECK(pr.kind == TL_PHASE_KIND_LIQUID && pr.mass_density > 300 && pr.mass_density < 700, "liquid density kg/m3");
  tl_mixture_properties mp;
  OK(tl_result_mixture_properties(res, model, &mp));
  CHECK(fabs(mp.molar_volume - (v.fraction * v.molar_volume + l.fraction * l.molar_volume)) < 1e-15,
        "mixture molar volume");

  /* Warm start on the next call. */
  OK(tl_context_flash(ctx, 301.0, 5.0e6, z, 2, NULL, res));
  OK(tl_result_diagnostics(res, &d));
  CHECK(d.warm_start, "second call warm-started");
  OK(tl_context_reset(ctx));
  OK(tl_context_flash(ctx, 301.0, 5.0e6, z, 2, NULL, res));
  OK(tl_result_diagnostics(res, &d));
  CHECK(!d.warm_start, "cold after reset");

  /* Result JSON with the size query. */
  CHECK(tl_result_to_json(res, NULL, 0, &needed) == TL_STATUS_BUFFER_TOO_SMALL && needed > 100, "JSON size query");
  char *json = malloc(needed);
  OK(tl_result_to_json(res, json, needed, &needed));
  CHECK(strstr(json, "\"phases\"") != NULL && strlen(json) + 1 == needed, "JSON text");
  free(json);

  /* Options: negative flash gives a tie line for a single-phase feed. */
  tl_flash_options opts;
  OK(tl_flash_options_default(&opts));
  CHECK(opts.certificate && !opts.negative_flash && opts.tolerance == 1e-10, "default options");
  opts.negative_flash = true;
  double zv[2] = {0.97, 0.03};
  OK(tl_flash(model, 300.0, 5.0e6, zv, 2, &opts, res));
  OK(tl_result_num_phases(res, &np));
  CHECK(np == 1, "single phase");
  double tx[2], ty[2];
  tl_status st = tl_result_tie_line(res, &beta, tx, 2, ty, 2);
  CHECK(st == TL_STATUS_OK && (beta > 1.0 || beta < 0.0), "tie-line extension beta outside [0, 1]");
  OK(tl_flash(model, 300.0, 5.0e6, zv, 2, NULL, res));
  CHECK(tl_result_tie_line(res, &beta, NULL, 0, NULL, 0) == TL_STATUS_NOT_AVAILABLE, "no tie line by default");

  /* Three phases: methane, n-hexane and water (PR, k_ij = 0.5 water-hydrocarbon, common
     practice, no source) at 300 K, 2 MPa split into a vapour, a hexane-rich and an aqueous
     liquid when three phases are allowed; by default that state is a typed error. */
  {
    const tl_model *mhw = NULL;
    OK(tl_model_from_json("{\"model\": \"cubic\", \"kind\": \"peng_robinson\", "
                          "\"components\": [\"methane\", \"n-hexane\", \"water\"], "
                          "\"kij\": [[0, 2, 0.5], [1, 2, 0.5]]}",
                          &mhw));
    double z3[3] = {0.3, 0.2, 0.5};
    CHECK(tl_flash(mhw, 300.0, 2e6, z3, 3, NULL, res) == TL_STATUS_NO_SOLUTION, "a third phase is reported by default");
    OK(tl_flash_options_default(&opts));
    CHECK(opts.max_phases == 2, "two phases by default");
    opts.max_phases = 3;
    OK(tl_flash(mhw, 300.0, 2e6, z3, 3, &opts, res));
    OK(tl_result_num_phases(res, &np));
    CHECK(np == 3, "three phases");
    tl_phase_info pi[3];
    double sum_w = 0, xw[3];
    for (size_t k = 0; k < 3 && np == 3; ++k) {
      double comp[3];
      OK(tl_result_phase(res, k, &pi[k]));
      OK(tl_result_phase_composition(res, k, comp, 3));
      xw[k] = comp[2];
      sum_w += pi[k].fraction * comp[2];
    }
    CHECK(np == 3 && pi[0].kind == TL_PHASE_KIND_VAPOR && pi[1].kind == TL_PHASE_KIND_LIQUID2 &&
              pi[2].kind == TL_PHASE_KIND_LIQUID, "vapour, lighter liquid, denser liquid");
    CHECK(np == 3 && xw[2] > 0.999 && fabs(sum_w - 0.5) < 1e-12, "aqueous liquid; water balance");
    opts.max_phases = 4;
    CHECK(tl_flash(mhw, 300.0, 2e6, z3, 3, &opts, res) == TL_STATUS_INVALID_INPUT, "max_phases 4 refused");
    tl_model_free(mhw);
  }

  /* Stability, saturation, bubble and dew points, properties at (T, p, n). */
  OK(tl_stability(model, 300.0, 5.0e6, z, 2, NULL, res));
  tl_stability_summary ss;
  OK(tl_result_stability(res, &ss));
  CHECK(!ss.stable && ss.min_tpd < 0 && ss.num_points >= 1, "the feed is unstable");
  double w[2], tpd = 0;
  bool liq = false;
  OK(tl_result_stationary_point(res, 0, &tpd, &liq, w, 2));
  CHECK(tpd == ss.min_tpd, "most negative point first");
  CHECK(tl_result_num_phases(res, &np) == TL_STATUS_WRONG_RESULT_KIND, "flash accessor on a stability result");
  tl_saturation_point sp;
  OK(tl_saturation_pressure(model, 1, 350.0, NULL, &sp));
  CHECK(sp.pressure > 8e5 && sp.pressure < 1.1e6, "n-butane vapour pressure at 350 K");
  tl_saturation_point st2;
  OK(tl_saturation_temperature(model, 1, sp.pressure, NULL, &st2));
  CHECK(fabs(st2.temperature - 350.0) < 1e-6, "boiling temperature round trip");
  CHECK(tl_saturation_pressure(model, 0, 250.0, NULL, &sp) == TL_STATUS_NO_SOLUTION, "above Tc");
  last_error(msg, sizeof msg);
  CHECK(strstr(msg, "critical") != NULL, "message names the critical temperature");
  tl_bubble_dew_point bp;
  double inc[2];
  double zl[2] = {0.3, 0.7};
  OK(tl_bubble_pressure(model, 300.0, zl, 2, NULL, &bp, inc, 2));
  CHECK(bp.pressure > 5.0e6 && bp.pressure < 6.0e6 && inc[0] > 0.3, "bubble pressure of a butane-rich liquid");
  OK(tl_dew_pressure(model, 300.0, z, 2, NULL, &bp, NULL, 0));
  CHECK(bp.pressure < 5.0e6, "dew pressure below it");
  OK(tl_phase_properties(model, 300.0, 1.0e5, zv, 2, TL_ROOT_VAPOR, &pr, NULL, 0));
  CHECK(pr.kind == TL_PHASE_KIND_VAPOR && fabs(pr.z - 1.0) < 0.02, "near-ideal gas at 1 bar");

  /* Errors: status, message, outputs untouched. */
  tl_context *untouched = (tl_context *)0x1;
  CHECK(tl_context_new(NULL, &untouched) == TL_STATUS_NULL_POINTER && untouched == (tl_context *)0x1,
        "NULL model: status and no output");
  double bad[2] = {0.5, -1.0};
  CHECK(tl_context_flash(ctx, 300.0, 5.0e6, bad, 2, NULL, res) == TL_STATUS_INVALID_INPUT, "negative amount");
  last_error(msg, sizeof msg);
  CHECK(strstr(msg, "component 1") != NULL, "message names the component");
  OK(tl_result_kind_of(res, &kind));
  CHECK(kind == TL_RESULT_KIND_STABILITY, "a failed flash leaves the result unchanged");
  char tiny[8];
  size_t full = 0;
  CHECK(tl_last_error_message(tiny, sizeof tiny, &full) == TL_STATUS_BUFFER_TOO_SMALL && strlen(tiny) == 7 &&
            full > 8,
        "truncated message");
  last_error(msg, sizeof msg);
  CHECK(strstr(msg, "component 1") != NULL, "reading the message does not change it");

  /* Pure water: IAPWS-95 (built from its JSON description) with IAPWS-06 ice Ih. */
  {
    const tl_model *water = NULL;
    const tl_solid *ice = NULL;
    OK(tl_model_from_json("{\"model\": \"iapws95\"}", &water));
    OK(tl_solid_ice_ih_new(&ice));
    size_t wn = 0;
    OK(tl_model_num_components(water, &wn));
    CHECK(wn == 1, "IAPWS-95 water has one component");
    const tl_solid *solids[] = {ice};
    /* IAPWS R10-06(2009): ice Ih and IAPWS-95 liquid coexist at 273.152519 K at 101325 Pa. */
    tl_coexistence melt;
    OK(tl_pure_coexistence_temperature(water, 0, solids, 1, TL_PURE_SOLID, TL_PURE_LIQUID, 101325.0, NULL, &melt));
    CHECK(fabs(melt.temperature - 273.152519) < 1e-6, "normal melting point 273.152519 K (R10-06) to 1e-6 K");
    CHECK(melt.a.phase == TL_PURE_SOLID && melt.b.phase == TL_PURE_LIQUID, "melting: the phases as asked");
    CHECK(melt.delta_v < 0 && melt.clapeyron_slope < 0, "ice is less dense than water: dp/dT < 0 on melting");
    /* IAPWS R6-95(2018) Table 8: saturation pressure at 450 K is 0.932203564 MPa. */
    tl_coexistence sat;
    OK(tl_pure_coexistence_pressure(water, 0, solids, 1, TL_PURE_LIQUID, TL_PURE_VAPOR, 450.0, NULL, &sat));
    CHECK(fabs(sat.pressure - 0.932203564e6) / 0.932203564e6 < 1e-8, "p_sat(450 K) = 0.932203564 MPa (R6-95 Table 8)");
    CHECK(fabs(sat.a.gibbs - sat.b.gibbs) <= 1e-9 * fabs(sat.a.gibbs), "equal molar g of liquid and vapour");
    /* At 101325 Pa, 263.15 K lies below the R10-06 melting point (ice) and 283.15 K above it (liquid). */
    tl_pure_phase_point st;
    OK(tl_pure_stable_phase(water, 0, solids, 1, 263.15, 101325.0, &st));
    CHECK(st.phase == TL_PURE_SOLID, "ice is stable at 263.15 K, 101325 Pa");
    OK(tl_pure_stable_phase(water, 0, solids, 1, 283.15, 101325.0, &st));
    CHECK(st.phase == TL_PURE_LIQUID, "liquid is stable at 283.15 K, 101325 Pa");
    /* Triple point: 273.16 K by definition (ITS-90), 611.655 Pa (IAPWS-95 vapour pressure there). */
    tl_triple_point tp;
    OK(tl_pure_triple_point(water, 0, solids, 1, 0, NULL, &tp));
    CHECK(fabs(tp.temperature - 273.16) < 1e-5 && fabs(tp.pressure - 611.655) < 5e-4, "triple point 273.16 K, 611.655 Pa");
    /* G(p) at 450 K: the liquid and vapour curves cross once, at the vapour pressure
       0.932203564 MPa (IAPWS R6-95(2018) Table 8); ice is outside its range there (NaN). */
    double ps[11];
    for (int k = 0; k < 11; ++k) ps[k] = 0.5e6 + 0.1e6 * k;
    double g[33];
    tl_gibbs_crossing cross[4];
    size_t nx = 0;
    OK(tl_pure_gibbs_curves_isothermal(water, 0, solids, 1, 450.0, ps, 11, g, 33, cross, 4, &nx));
    CHECK(nx == 1 && cross[0].stable, "G(p) at 450 K: one stable crossing");
    CHECK(fabs(cross[0].point.pressure - 0.932203564e6) / 0.932203564e6 < 1e-8,
          "G(p) crossing at 0.932203564 MPa (R6-95 Table 8)");
    CHECK(isnan(g[22]) && isnan(g[32]), "no ice at 450 K");
    CHECK(g[11] < g[0] && g[21] > g[10], "vapour below liquid at 0.5 MPa, above it at 1.5 MPa");
    CHECK(tl_pure_gibbs_curves_isothermal(water, 0, solids, 1, 450.0, ps, 11, g, 32, NULL, 0, NULL) ==
              TL_STATUS_BUFFER_TOO_SMALL, "G(p): a gibbs buffer one short is refused");

    /* The vapour-pressure curve traced over the three temperatures of R6-95(2018) Table 8. */
    double ts[3] = {275.0, 450.0, 625.0};
    double want[3] = {0.698451167e3, 0.932203564e6, 0.169082693e8};
    tl_coexistence line[3];
    OK(tl_pure_trace(water, 0, solids, 1, TL_PURE_LIQUID, TL_PURE_VAPOR, TL_TRACE_TEMPERATURE, ts, 3, NULL, line, 3));
    for (int k = 0; k < 3; ++k)
      CHECK(fabs(line[k].pressure - want[k]) / want[k] < 1e-8, "traced p_sat as R6-95 Table 8");
    /* The melting curve traced along pressure: IAPWS R10-06 gives 273.152519 K at 101325 Pa;
       the Clapeyron slope is negative, so the melting point falls as p rises. */
    double pm[3] = {101325.0, 10e6, 50e6};
    tl_coexistence mline[3];
    OK(tl_pure_trace(water, 0, solids, 1, TL_PURE_SOLID, TL_PURE_LIQUID, TL_TRACE_PRESSURE, pm, 3, NULL, mline, 3));
    CHECK(fabs(mline[0].temperature - 273.152519) < 1e-6, "traced melting point at 101325 Pa (R10-06)");
    CHECK(mline[1].temperature < mline[0].temperature && mline[2].temperature < mline[1].temperature,
          "melting temperature falls with pressure");
    CHECK(tl_pure_trace(water, 0, solids, 1, TL_PURE_LIQUID, TL_PURE_VAPOR, 7, ts, 3, NULL, line, 3) ==
              TL_STATUS_INVALID_INPUT, "trace: unknown axis refused");

    /* One phase's state: liquid water at 300 K, 101325 Pa exists; ice at 450 K does not. */
    tl_pure_phase_point pt;
    bool exists = false;
    OK(tl_pure_phase_state(water, 0, solids, 1, TL_PURE_LIQUID, 300.0, 101325.0, &pt, &exists));
    CHECK(exists && pt.phase == TL_PURE_LIQUID && pt.molar_volume > 1.7e-5 && pt.molar_volume < 1.9e-5,
          "liquid water at 300 K: about 18 cm3/mol");
    OK(tl_pure_phase_state(water, 0, solids, 1, TL_PURE_SOLID, 450.0, 101325.0, &pt, &exists));
    CHECK(!exists, "no ice at 450 K");

    /* Solid handles: a clone is the same solid; the species is "water". */
    const tl_solid *ice2 = NULL;
    OK(tl_solid_clone(ice, &ice2));
    char species[16];
    size_t need = 0;
    OK(tl_solid_species(ice2, species, sizeof species, &need));
    CHECK(strcmp(species, "water") == 0 && need == 6, "ice species is water");
    tl_solid_free(ice2);

    tl_model_free(water);
    tl_solid_free(ice);
    tl_solid_free(NULL);
  }

  /* Dry ice from user fusion data equal to the built-in carbon-dioxide data is the same solid. */
  {
    const tl_model *co2 = NULL;
    const char *names[] = {"carbon dioxide"};
    OK(tl_model_new(names, 1, TL_CUBIC_PENG_ROBINSON, &co2));
    const tl_solid *built_in = NULL, *user = NULL;
    OK(tl_solid_carbon_dioxide_new(co2, 0, &built_in));
    tl_fusion_data d = {216.592, 0.51795e6, 9.0e3, 27.0, 44.0095e-3 / 1510.0, 150.0, 260.0, 50e6};
    OK(tl_solid_fusion_new(co2, 0, &d, "test: the built-in dry-ice numbers", &user));
    const tl_solid *both[] = {built_in, user};
    tl_pure_phase_point a, b;
    bool ea = false, eb = false;
    OK(tl_pure_phase_state(co2, 0, both, 2, TL_PURE_SOLID, 200.0, 1e5, &a, &ea));
    OK(tl_pure_phase_state(co2, 0, both, 2, TL_PURE_SOLID + 1, 200.0, 1e5, &b, &eb));
    CHECK(ea && eb && a.gibbs == b.gibbs && a.molar_volume == b.molar_volume, "user fusion data = built-in solid");
    d.enthalpy_of_fusion = -1.0;
    const tl_solid *bad = NULL;
    CHECK(tl_solid_fusion_new(co2, 0, &d, NULL, &bad) == TL_STATUS_INVALID_INPUT && bad == NULL,
          "negative enthalpy of fusion refused");
    last_error(msg, sizeof msg);
    CHECK(strstr(msg, "enthalpy_of_fusion") != NULL, "the message names the field");
    CHECK(tl_solid_fusion_new(co2, 0, NULL, NULL, &bad) == TL_STATUS_NULL_POINTER, "NULL fusion data refused");
    tl_solid_free(built_in);
    tl_solid_free(user);
    tl_model_free(co2);
  }

  tl_result_free(res);
  tl_result_free(res2);
  tl_context_free(ctx);
  tl_model_free(model);
  tl_model_free(model2);
  tl_model_free(NULL);
  tl_context_free(NULL);
  tl_result_free(NULL);

  printf("test_c_api: %d passed, %d failed\n", passed, failed);
  return failed == 0 ? 0 : 1;
}
