/* Calculations by name from plain C11: the list and descriptions, plans with options,
 * workspaces, records and their fields, and the errors of each. The flash_pt record is
 * compared bit for bit with tl_flash. */
#include "tieline.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int passed = 0, failed = 0;
#define CHECK(cond, what)                                                \
  do {                                                                   \
    if (cond) {                                                          \
      ++passed;                                                          \
    } else {                                                             \
      ++failed;                                                          \
      fprintf(stderr, "%s:%d: FAILED: %s\n", __FILE__, __LINE__, what); \
    }                                                                    \
  } while (0)
#define OK(call) CHECK((call) == TL_STATUS_OK, #call)

static int last_error_contains(const char *word) {
  char msg[1024];
  size_t needed = 0;
  tl_last_error_message(msg, sizeof msg, &needed);
  return strstr(msg, word) != NULL;
}

int main(void) {
  /* The list of calculations and their descriptions. */
  size_t count = tl_calculation_count();
  CHECK(count >= 1, "at least one calculation");
  int has_flash = 0;
  for (size_t i = 0; i < count; ++i) {
    char name[64];
    size_t needed = 0;
    OK(tl_calculation_name(i, name, sizeof name, &needed));
    if (strcmp(name, "flash_pt") == 0) has_flash = 1;
  }
  CHECK(has_flash, "flash_pt is listed");
  CHECK(tl_calculation_name(count, NULL, 0, NULL) == TL_STATUS_INDEX_OUT_OF_RANGE, "index past the end");
  {
    size_t needed = 0;
    CHECK(tl_calculation_describe("flash_pt", NULL, 0, &needed) == TL_STATUS_BUFFER_TOO_SMALL && needed > 10,
          "description size query");
    char *desc = malloc(needed);
    OK(tl_calculation_describe("flash_pt", desc, needed, &needed));
    CHECK(strstr(desc, "\"temperature\"") && strstr(desc, "\"tolerance\""), "description names arguments and options");
    free(desc);
  }

  /* Plans: unknown names and option keys are invalid input naming what is allowed. */
  tl_plan *plan = NULL;
  CHECK(tl_plan_new("flash_tp", NULL, &plan) == TL_STATUS_INVALID_INPUT && plan == NULL, "unknown calculation");
  CHECK(last_error_contains("flash_pt"), "the message lists the calculations");
  CHECK(tl_plan_new("flash_pt", "{\"tolerence\": 1e-8}", &plan) == TL_STATUS_INVALID_INPUT, "unknown option");
  CHECK(last_error_contains("tolerance"), "the message lists the options");
  CHECK(tl_plan_new("flash_pt", "{", &plan) == TL_STATUS_INVALID_INPUT, "malformed JSON");
  CHECK(tl_plan_new(NULL, NULL, &plan) == TL_STATUS_NULL_POINTER, "NULL name");
  CHECK(tl_plan_new("flash_pt", NULL, NULL) == TL_STATUS_NULL_POINTER, "NULL out");
  OK(tl_plan_new("flash_pt", "{\"tolerance\": 1e-11}", &plan));

  const char *names[] = {"methane", "propane"};
  const tl_model *model = NULL;
  OK(tl_model_new(names, 2, TL_CUBIC_PENG_ROBINSON, &model));
  tl_record *rec = NULL;
  tl_workspace *ws = NULL;
  OK(tl_record_new(&rec));
  OK(tl_workspace_new(&ws));
  const double args[2] = {250.0, 2.0e6};
  const double feed[2] = {0.6, 0.4};
  OK(tl_run(plan, ws, model, args, 2, feed, 2, rec));

  /* The record against the typed flash, bit for bit. */
  tl_flash_options fo;
  OK(tl_flash_options_default(&fo));
  fo.tolerance = 1e-11;
  tl_result *res = NULL;
  OK(tl_result_new(&res));
  OK(tl_flash(model, 250.0, 2.0e6, feed, 2, &fo, res));
  double beta = 0, beta_rec = 0;
  OK(tl_result_vapor_fraction(res, &beta));
  OK(tl_record_number(rec, "vapor_fraction", &beta_rec));
  CHECK(beta == beta_rec && beta > 0 && beta < 1, "vapour fraction identical");
  double x_typed[2];
  OK(tl_result_phase_composition(res, 1, x_typed, 2));
  size_t needed = 0, rows = 0, cols = 0;
  CHECK(tl_record_numbers(rec, "compositions", NULL, 0, &needed, &rows, &cols) == TL_STATUS_OK && needed == 4 &&
            rows == 2 && cols == 2,
        "table size query");
  double x[4];
  CHECK(tl_record_numbers(rec, "compositions", x, 3, &needed, NULL, NULL) == TL_STATUS_BUFFER_TOO_SMALL,
        "a short buffer is refused");
  OK(tl_record_numbers(rec, "compositions", x, 4, &needed, &rows, &cols));
  CHECK(x[2] == x_typed[0] && x[3] == x_typed[1], "liquid composition identical");
  double nph = 0;
  OK(tl_record_number(rec, "num_phases", &nph));
  CHECK(nph == 2.0, "a count reads as a number");
  char word[32];
  OK(tl_record_text(rec, "phase_kinds", 0, word, sizeof word, &needed));
  CHECK(strcmp(word, "vapor") == 0, "first phase is the vapour");
  CHECK(tl_record_text(rec, "phase_kinds", 5, word, sizeof word, &needed) == TL_STATUS_INDEX_OUT_OF_RANGE,
        "phase index past the end");
  OK(tl_record_field_unit(rec, "enthalpy", word, sizeof word, &needed));
  CHECK(strcmp(word, "J/mol") == 0, "enthalpy unit");
  double h = 0;
  OK(tl_record_number(rec, "enthalpy", &h));
  CHECK(isfinite(h), "mixture enthalpy");
  CHECK(tl_record_number(rec, "compositions", &h) == TL_STATUS_INVALID_INPUT, "a table is not a number");
  CHECK(tl_record_number(rec, "enthalpie", &h) == TL_STATUS_INVALID_INPUT && last_error_contains("enthalpy"),
        "an unknown field lists the fields");
  size_t nf = 0;
  OK(tl_record_num_fields(rec, &nf));
  CHECK(nf > 10, "fields counted");
  OK(tl_record_field_name(rec, 0, word, sizeof word, &needed));
  CHECK(strcmp(word, "temperature") == 0, "first field");
  OK(tl_record_kind(rec, word, sizeof word, &needed));
  CHECK(strcmp(word, "flash_pt") == 0, "record kind");
  CHECK(tl_record_to_json(rec, NULL, 0, &needed) == TL_STATUS_BUFFER_TOO_SMALL, "JSON size query");
  {
    char *json = malloc(needed);
    OK(tl_record_to_json(rec, json, needed, &needed));
    CHECK(strstr(json, "\"units\"") != NULL, "JSON carries units");
    free(json);
  }

  /* Warm start through the workspace: the second point of a sweep reports it. */
  const double args2[2] = {251.0, 2.0e6};
  OK(tl_run(plan, ws, model, args2, 2, feed, 2, rec));
  char flag[8];
  OK(tl_record_text(rec, "warm_start", 0, flag, sizeof flag, &needed));
  CHECK(strcmp(flag, "true") == 0, "warm start used");
  OK(tl_workspace_reset(ws));

  /* Bad arguments: wrong count, NaN, NULL handles; the record keeps its content. */
  CHECK(tl_run(plan, ws, model, args, 1, feed, 2, rec) == TL_STATUS_INVALID_INPUT &&
            last_error_contains("temperature (K), pressure (Pa)"),
        "wrong argument count names the arguments");
  const double bad[2] = {NAN, 2.0e6};
  CHECK(tl_run(plan, ws, model, bad, 2, feed, 2, rec) == TL_STATUS_INVALID_INPUT, "NaN temperature");
  CHECK(tl_run(plan, ws, model, args, 2, feed, 3, rec) == TL_STATUS_INVALID_INPUT, "feed length");
  CHECK(tl_run(NULL, ws, model, args, 2, feed, 2, rec) == TL_STATUS_NULL_POINTER, "NULL plan");
  CHECK(tl_run(plan, ws, model, args, 2, feed, 2, NULL) == TL_STATUS_NULL_POINTER, "NULL record");
  CHECK(tl_run(plan, ws, (const tl_model *)rec, args, 2, feed, 2, rec) == TL_STATUS_INVALID_HANDLE,
        "a record passed as a model");
  OK(tl_record_number(rec, "vapor_fraction", &beta_rec));
  CHECK(beta_rec > 0, "the record survived the failures");
  OK(tl_run(plan, NULL, model, args, 2, feed, 2, rec));

  /* A named calculation: the flash's derivatives. */
  OK(tl_flash_sensitivities(model, 250.0, 2.0e6, feed, 2, NULL, ws, rec));
  double cp_eq = 0, cp_frozen = 0, dn[2];
  OK(tl_record_number(rec, "cp_equilibrium", &cp_eq));
  OK(tl_record_number(rec, "cp_frozen", &cp_frozen));
  CHECK(cp_eq > cp_frozen, "the equilibrium cp includes the latent heat");
  OK(tl_record_numbers(rec, "d_phase_amounts_dt", dn, 2, &needed, NULL, NULL));
  CHECK(fabs(dn[0] + dn[1]) < 1e-12, "phase amounts change by opposite amounts");
  CHECK(tl_flash_sensitivities(model, 250.0, 2.0e6, feed, 2, "{\"tolerance\": 0}", ws, rec) == TL_STATUS_INVALID_INPUT,
        "options are checked");
  CHECK(tl_flash_sensitivities(model, NAN, 2.0e6, feed, 2, NULL, NULL, rec) == TL_STATUS_INVALID_INPUT, "NaN T");
  CHECK(tl_flash_sensitivities(model, 250.0, 2.0e6, feed, 2, NULL, NULL, NULL) == TL_STATUS_NULL_POINTER,
        "NULL record");

  /* The envelope and the critical point of the same feed: the trace passes through it. */
  OK(tl_critical_point(model, feed, 2, NULL, rec));
  double tc = 0, pc = 0;
  OK(tl_record_number(rec, "temperature", &tc));
  OK(tl_record_number(rec, "pressure", &pc));
  OK(tl_phase_envelope(model, feed, 2, "{\"quality_lines\": [0.5]}", rec));
  size_t npts = 0;
  OK(tl_record_numbers(rec, "temperature", NULL, 0, &npts, NULL, NULL));
  CHECK(npts > 20, "an envelope of many points");
  double tc_env[4];
  size_t ncrit = 0;
  OK(tl_record_numbers(rec, "critical_temperature", tc_env, 4, &ncrit, NULL, NULL));
  CHECK(ncrit == 1 && fabs(tc_env[0] - tc) < 1e-6 * tc, "the envelope passes through the critical point");
  double tct = 0;
  OK(tl_record_number(rec, "cricondentherm_temperature", &tct));
  CHECK(tct >= tc, "the cricondentherm lies at or above the critical temperature here");
  const double pure[2] = {1.0, 0.0};
  CHECK(tl_phase_envelope(model, pure, 2, NULL, rec) == TL_STATUS_NO_SOLUTION && last_error_contains("saturation"),
        "a pure feed has no envelope");
  CHECK(tl_phase_envelope(model, feed, 2, "{\"max_points\": 1e12}", rec) == TL_STATUS_INVALID_INPUT,
        "an absurd point limit is refused");
  (void)pc;

  /* PH flash of water inside its two-phase dome at 1 atm: the normal boiling point of
   * IAPWS-95, 373.124 K (IAPWS R6-95(2018); the value to 1 mK from memory). */
  {
    const tl_model *water = NULL;
    OK(tl_model_from_json("{\"model\": \"iapws95\"}", &water));
    const double one[1] = {1.0};
    double hl = 0, hv = 0, t = 0, beta = 0;
    OK(tl_flash_ph(water, 101325.0, -280000.0, one, 1, NULL, NULL, rec)); /* liquid */
    OK(tl_record_number(rec, "enthalpy", &hl));
    OK(tl_flash_ph(water, 101325.0, -240000.0, one, 1, NULL, NULL, rec)); /* vapour */
    OK(tl_record_number(rec, "enthalpy", &hv));
    CHECK(fabs(hl + 280000.0) < 1e-4 && fabs(hv + 240000.0) < 1e-4, "the enthalpy is met");
    OK(tl_flash_ph(water, 101325.0, -255000.0, one, 1, NULL, NULL, rec));
    OK(tl_record_number(rec, "temperature", &t));
    OK(tl_record_number(rec, "vapor_fraction", &beta));
    CHECK(fabs(t - 373.124) < 1e-3 && beta > 0 && beta < 1, "two phases at the normal boiling point");
    CHECK(tl_record_number(rec, "d_temperature_d_enthalpy", &t) == TL_STATUS_NO_SOLUTION,
          "no derivative of a pure substance inside the dome");
    CHECK(tl_flash_ph(water, 101325.0, 1.0e6, one, 1, NULL, NULL, rec) == TL_STATUS_OUTSIDE_VALIDITY &&
              last_error_contains("1273.15"),
          "an enthalpy above the model's range names the bound");
    CHECK(tl_flash_tv(water, 300.0, -1.0, one, 1, NULL, NULL, rec) == TL_STATUS_INVALID_INPUT, "negative volume");
    CHECK(tl_flash_uv(water, NAN, 1e-3, one, 1, NULL, NULL, rec) == TL_STATUS_INVALID_INPUT, "NaN energy");
    tl_model_free(water);
  }

  /* Chemical equilibrium: the water-gas shift at 1000 K satisfies K from NIST-JANAF 4th ed.
   * (Chase 1998) formation Gibbs energies (from memory): K = 1.438 within the data's 0.2 %. */
  {
    const char *wgs[] = {"carbon monoxide", "water", "carbon dioxide", "hydrogen"};
    const tl_model *gas = NULL;
    OK(tl_model_new(wgs, 4, TL_CUBIC_PENG_ROBINSON, &gas));
    const double n0[4] = {1.0, 1.0, 0.0, 0.0};
    OK(tl_reaction_tp(gas, 1000.0, 1.0e5, n0, 4, NULL, ws, rec));
    double n[4];
    OK(tl_record_numbers(rec, "amounts", n, 4, &needed, NULL, NULL));
    const double k = n[2] * n[3] / (n[0] * n[1]);
    CHECK(fabs(k / 1.438 - 1.0) < 2e-3, "water-gas shift constant at 1000 K");
    const double bad[4] = {1.0, -1.0, 0.0, 0.0};
    CHECK(tl_reaction_tp(gas, 1000.0, 1.0e5, bad, 4, NULL, ws, rec) == TL_STATUS_INVALID_INPUT, "negative amount");
    CHECK(tl_reaction_tp(gas, 1000.0, 1.0e5, n0, 5, "{\"extra_species\": [\"unobtainium\"]}", ws, rec) ==
              TL_STATUS_UNKNOWN_COMPONENT,
          "unknown species");
    CHECK(tl_reaction_tp(gas, 1.0e5, 1.0e5, n0, 4, NULL, ws, rec) == TL_STATUS_OUTSIDE_VALIDITY,
          "a temperature outside the cp ranges");
    /* The closed vessel at the volume of the 1000 K, 1 bar equilibrium returns its pressure. */
    double v = 0, p_tv = 0;
    OK(tl_reaction_tp(gas, 1000.0, 1.0e5, n0, 4, NULL, NULL, rec));
    OK(tl_record_number(rec, "volume", &v));
    OK(tl_reaction_tv(gas, 1000.0, v, n0, 4, NULL, NULL, rec));
    OK(tl_record_number(rec, "pressure", &p_tv));
    CHECK(fabs(p_tv / 1.0e5 - 1.0) < 1e-9, "TV inverts TP");
    CHECK(tl_reaction_tv(gas, 1000.0, -1.0, n0, 4, NULL, NULL, rec) == TL_STATUS_INVALID_INPUT, "negative volume");
    CHECK(tl_reaction_uv(gas, 1.0e12, v, n0, 4, NULL, NULL, rec) == TL_STATUS_NO_SOLUTION, "unreachable energy");
    tl_model_free(gas);
  }
  /* Reaction and condensation together: water forms from H2 + O2 and condenses at 298 K. */
  {
    const char *sp[] = {"hydrogen", "oxygen", "nitrogen", "water"};
    const tl_model *m4 = NULL;
    OK(tl_model_new(sp, 4, TL_CUBIC_PENG_ROBINSON, &m4));
    const double n0[4] = {2.0, 1.0, 4.0, 0.0};
    OK(tl_reaction_tp_fluid_phases(m4, 298.15, 1.0e5, n0, 4, NULL, NULL, rec));
    double nph = 0;
    char kind[16];
    OK(tl_record_number(rec, "num_phases", &nph));
    OK(tl_record_text(rec, "phase_kinds", 1, kind, sizeof kind, &needed));
    CHECK(nph == 2.0 && strcmp(kind, "liquid") == 0, "a liquid condenses");
    CHECK(tl_reaction_tp_fluid_phases(m4, 298.15, 1.0e5, n0, 3, NULL, NULL, rec) == TL_STATUS_INVALID_INPUT,
          "feed length");
    tl_model_free(m4);
  }

  tl_result_free(res);
  tl_record_free(rec);
  tl_workspace_free(ws);
  tl_plan_free(plan);
  tl_model_free(model);
  tl_record_free(NULL);
  tl_plan_free(NULL);
  tl_workspace_free(NULL);
  printf("test_calc: %d passed, %d failed\n", passed, failed);
  return failed == 0 ? 0 : 1;
}
