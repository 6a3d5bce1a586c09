/* Liquid solutions from plain C11: a gamma-phi model built from JSON, its activity
 * coefficients, an azeotrope (Smith, Van Ness & Abbott, Introduction to Chemical Engineering
 * Thermodynamics, 7th ed., Example 10.3(e): methanol/methyl acetate at 318.15 K, 73.76 kPa,
 * x1 = 0.3245; statement verified, answer from memory + recomputed), the multiphase flash of
 * a water-hydrocarbon feed (three phases; Peng-Robinson with k_ij = 0.5 between water and the
 * hydrocarbons, common practice, no source), and the bad input of each: a model without an
 * activity model, a binary pair missing from the parameter table (named in the message), a
 * molecule unknown to the UNIFAC table, a temperature outside the parameters' range, a
 * ternary azeotrope. */
#include "tieline.h"

#include <math.h>
#include <stdio.h>
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

static const char *SVNA_10_3 =
    "{\"model\": \"solution\", \"components\": [\"methanol\", \"methyl acetate\"],"
    " \"liquid\": {\"kind\": \"margules\", \"a\": [[0, 2.771], [2.771, 0]],"
    "  \"b\": [[0, -0.00523], [-0.00523, 0]], \"t_min\": 273.15, \"t_max\": 360},"
    " \"vapor_pressures\": ["
    "  {\"component\": \"methanol\", \"t_min\": 273.15, \"t_max\": 360, \"source\": \"SVNA Ex. 10.3\","
    "   \"equation\": {\"form\": \"antoine\", \"a\": 16.59158, \"b\": 3643.31, \"c\": -33.424,"
    "   \"units\": {\"base\": \"ln\", \"pressure\": \"kPa\", \"temperature\": \"kelvin\"}}},"
    "  {\"component\": \"methyl acetate\", \"t_min\": 273.15, \"t_max\": 360, \"source\": \"SVNA Ex. 10.3\","
    "   \"equation\": {\"form\": \"antoine\", \"a\": 14.25326, \"b\": 2665.54, \"c\": -53.424,"
    "   \"units\": {\"base\": \"ln\", \"pressure\": \"kPa\", \"temperature\": \"kelvin\"}}}]}";

int main(void) {
  const tl_model *sol = NULL;
  OK(tl_model_from_json(SVNA_10_3, &sol));
  tl_record *rec = NULL;
  OK(tl_record_new(&rec));

  /* Activity coefficients: ln g1 = A x2^2 with A = 2.771 - 0.00523 T (the example's model). */
  double x[2] = {0.25, 0.75};
  OK(tl_activity_coefficients(sol, 318.15, x, 2, rec));
  double lng[2] = {0, 0};
  size_t n = 0;
  OK(tl_record_numbers(rec, "ln_gamma", lng, 2, &n, NULL, NULL));
  double a = 2.771 - 0.00523 * 318.15;
  CHECK(n == 2 && fabs(lng[0] - a * 0.75 * 0.75) < 1e-12 && fabs(lng[1] - a * 0.25 * 0.25) < 1e-12,
        "ln gamma of the two-suffix Margules model");

  /* The azeotrope at 318.15 K. */
  OK(tl_azeotrope_at_temperature(sol, 318.15, x, 2, NULL, rec));
  double p = 0, comp[2] = {0, 0};
  OK(tl_record_number(rec, "pressure", &p));
  OK(tl_record_numbers(rec, "composition", comp, 2, &n, NULL, NULL));
  CHECK(fabs(p - 73760.0) < 10.0, "azeotrope pressure 73.76 kPa");
  CHECK(fabs(comp[0] - 0.3245) < 5e-4, "azeotrope composition x1 = 0.3245");

  /* Bad input. */
  CHECK(tl_activity_coefficients(sol, 500.0, x, 2, rec) == TL_STATUS_OUTSIDE_VALIDITY, "T above the parameters' range");
  CHECK(tl_activity_coefficients(sol, 318.15, x, 3, rec) == TL_STATUS_INVALID_INPUT, "wrong number of amounts");
  const tl_model *missing = NULL;
  CHECK(tl_model_from_json("{\"model\": \"solution\", \"components\": [\"methanol\", \"toluene\"],"
                           " \"liquid\": {\"kind\": \"nrtl\", \"parameters\": \"bank\"}}",
                           &missing) != TL_STATUS_OK &&
            missing == NULL,
        "a pair missing from the parameter table");
  CHECK(last_error_contains("methanol") && last_error_contains("toluene"), "the message names the pair");
  const tl_model *unknown = NULL;
  CHECK(tl_model_from_json("{\"model\": \"solution\", \"components\": [\"methane\", \"water\"],"
                           " \"liquid\": {\"kind\": \"unifac\"}}",
                           &unknown) != TL_STATUS_OK &&
            unknown == NULL,
        "a molecule without UNIFAC groups");
  CHECK(last_error_contains("methane"), "the message names the molecule");

  /* A cubic: no activity model; the multiphase flash of a water-hydrocarbon feed. */
  const tl_model *pr = NULL;
  OK(tl_model_from_json("{\"model\": \"cubic\", \"kind\": \"peng_robinson\","
                        " \"components\": [\"methane\", \"n-hexane\", \"water\"],"
                        " \"kij\": [[0, 2, 0.5], [1, 2, 0.5]]}",
                        &pr));
  double z[3] = {0.3, 0.2, 0.5};
  CHECK(tl_activity_coefficients(pr, 300.0, z, 3, rec) == TL_STATUS_INVALID_INPUT, "no activity model");
  CHECK(tl_azeotrope_at_pressure(pr, 1e5, z, 3, NULL, rec) == TL_STATUS_INVALID_INPUT, "ternary azeotrope");
  tl_workspace *ws = NULL;
  OK(tl_workspace_new(&ws));
  OK(tl_flash_multiphase(pr, 300.0, 2.0e6, z, 3, NULL, ws, rec));
  double np = 0, res = 1;
  OK(tl_record_number(rec, "num_phases", &np));
  OK(tl_record_number(rec, "residual", &res));
  CHECK(np == 3.0, "vapour, hydrocarbon liquid and water");
  CHECK(res <= 1e-10, "Newton-polished to 1e-10");
  OK(tl_flash_multiphase(pr, 300.5, 2.0e6, z, 3, NULL, ws, rec)); /* warm */
  CHECK(tl_flash_multiphase(pr, 300.0, 2.0e6, z, 3, "{\"max_liquids\": 9}", ws, rec) == TL_STATUS_INVALID_INPUT,
        "more than three liquids");
  CHECK(tl_flash_multiphase(pr, NAN, 2.0e6, z, 3, NULL, ws, rec) == TL_STATUS_INVALID_INPUT, "NaN temperature");

  tl_workspace_free(ws);
  tl_model_free(pr);
  tl_model_free(sol);
  tl_record_free(rec);
  printf("test_solution: %d passed, %d failed\n", passed, failed);
  return failed == 0 ? 0 : 1;
}
