/* Eight POSIX threads share one mixture model and one IAPWS-95 water model (and one ice Ih
 * and one solid-CO2 handle) and run a mixed list of calls: PT flashes, stability tests,
 * saturation and bubble/dew points, single-phase properties, the solid-fluid flash and the
 * frost point, water and ice by IAPWS, and calculations by name through tl_plan/tl_run. Each
 * thread starts the list at a different item, so different calls overlap in time. Every
 * thread's outputs are compared bit for bit with the same calls made serially beforehand. */
#include "tieline.h"

#include <math.h>
#include <pthread.h>
#include <stdint.h>
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

#define NTHREADS 8
#define MAXV 256

static const tl_model *mix;   /* water, carbon dioxide, methane (Peng-Robinson) */
static const tl_model *water; /* IAPWS-95 */
static const tl_solid *ice, *dry_ice;

/* The outputs of one item: its status and the numbers it read back. */
typedef struct {
  tl_status status;
  size_t n;
  double v[MAXV];
} output;

static void put(output *o, double x) {
  if (o->n < MAXV) o->v[o->n++] = x;
}

static void put_result(output *o, const tl_result *r, const tl_model *m) {
  size_t np = 0, nc = 0;
  tl_result_num_phases(r, &np);
  tl_result_num_components(r, &nc);
  put(o, (double)np);
  for (size_t k = 0; k < np; ++k) {
    tl_phase_info ph;
    double x[8];
    tl_properties p;
    tl_result_phase(r, k, &ph);
    put(o, ph.fraction);
    put(o, ph.molar_volume);
    tl_result_phase_composition(r, k, x, 8);
    for (size_t i = 0; i < nc; ++i) put(o, x[i]);
    if (tl_result_phase_properties(r, m, k, &p) == TL_STATUS_OK) {
      put(o, p.enthalpy);
      put(o, p.entropy);
      put(o, p.cp);
      put(o, p.speed_of_sound);
    }
  }
}

static void put_record(output *o, const tl_record *rec) {
  size_t nf = 0;
  tl_record_num_fields(rec, &nf);
  for (size_t i = 0; i < nf; ++i) {
    char name[96];
    size_t needed = 0, rows = 0, cols = 0;
    double buf[64];
    if (tl_record_field_name(rec, i, name, sizeof name, &needed) != TL_STATUS_OK) continue;
    if (tl_record_numbers(rec, name, buf, 64, &needed, &rows, &cols) == TL_STATUS_OK)
      for (size_t k = 0; k < needed; ++k) put(o, buf[k]);
  }
}

#define NITEMS 16
static const double feed3[3] = {0.1, 0.3, 0.6};

/* Item k of the list, with the thread's own result, record and workspace. */
static void item(int k, output *o, tl_result *r, tl_record *rec, tl_workspace *ws) {
  memset(o, 0, sizeof *o);
  tl_status s = TL_STATUS_OK;
  switch (k) {
  case 0: case 1: case 2: {
    /* PT flashes across the water-rich liquid / gas split. */
    double t = 280.0 + 40.0 * k;
    s = tl_flash(mix, t, 5.0e6, feed3, 3, NULL, r);
    if (s == TL_STATUS_OK) put_result(o, r, mix);
    break;
  }
  case 3: {
    s = tl_stability(mix, 300.0, 5.0e6, feed3, 3, NULL, r);
    if (s == TL_STATUS_OK) {
      tl_stability_summary sum;
      tl_result_stability(r, &sum);
      put(o, sum.min_tpd);
      put(o, (double)sum.num_points);
    }
    break;
  }
  case 4: {
    tl_saturation_point sp;
    s = tl_saturation_pressure(mix, 1, 250.0, NULL, &sp);
    if (s == TL_STATUS_OK) put(o, sp.pressure), put(o, sp.liquid_molar_volume), put(o, sp.enthalpy_of_vaporization);
    break;
  }
  case 5: {
    tl_bubble_dew_point bd;
    double y[3];
    const double liq[3] = {0.0, 0.7, 0.3};
    s = tl_bubble_pressure(mix, 230.0, liq, 3, NULL, &bd, y, 3);
    if (s == TL_STATUS_OK) put(o, bd.pressure), put(o, y[1]), put(o, y[2]);
    break;
  }
  case 6: {
    tl_properties p;
    double lnphi[3];
    s = tl_phase_properties(mix, 320.0, 2.0e6, feed3, 3, TL_ROOT_VAPOR, &p, lnphi, 3);
    if (s == TL_STATUS_OK) put(o, p.molar_volume), put(o, p.cp), put(o, p.joule_thomson), put(o, lnphi[0]);
    break;
  }
  case 7: {
    /* Freeze-out: CO2-rich gas with solid CO2 and ice as candidates. */
    const tl_solid *list[2] = {dry_ice, ice};
    const double gas[3] = {0.001, 0.3, 0.699};
    tl_solid_flash_summary sum;
    tl_solid_phase ph[2];
    tl_flash_options fo;
    tl_flash_options_default(&fo);
    fo.max_phases = 3;
    s = tl_flash_with_solids(mix, list, 2, 180.0, 1.0e6, gas, 3, &fo, r, &sum, ph, 2);
    if (s == TL_STATUS_OK) {
      put(o, sum.fluid_amount);
      put(o, (double)sum.num_solids_present);
      for (int i = 0; i < 2; ++i) put(o, ph[i].amount), put(o, ph[i].margin);
    }
    break;
  }
  case 8: {
    const double gas[3] = {0.0, 0.3, 0.7};
    double t = 0;
    s = tl_frost_point_temperature(mix, dry_ice, 1.0e6, gas, 3, 200.0, NULL, &t);
    if (s == TL_STATUS_OK) put(o, t);
    break;
  }
  case 9: {
    /* Water by IAPWS-95: vapour pressure and a liquid state. */
    tl_saturation_point sp;
    s = tl_saturation_pressure(water, 0, 373.124, NULL, &sp);
    if (s == TL_STATUS_OK) put(o, sp.pressure), put(o, sp.liquid_density), put(o, sp.vapor_density);
    tl_properties p;
    const double one = 1.0;
    if (s == TL_STATUS_OK) s = tl_phase_properties(water, 300.0, 1.0e5, &one, 1, TL_ROOT_LIQUID, &p, NULL, 0);
    if (s == TL_STATUS_OK) put(o, p.mass_density), put(o, p.cp), put(o, p.speed_of_sound);
    break;
  }
  case 10: {
    /* Ice Ih against IAPWS-95 liquid water: the melting pressure at 260 K and the stable phase. */
    const tl_solid *list[1] = {ice};
    tl_coexistence c;
    s = tl_pure_coexistence_pressure(water, 0, list, 1, TL_PURE_SOLID, TL_PURE_LIQUID, 260.0, NULL, &c);
    if (s == TL_STATUS_OK) put(o, c.pressure), put(o, c.delta_h), put(o, c.clapeyron_slope);
    tl_pure_phase_point pt;
    if (s == TL_STATUS_OK) s = tl_pure_stable_phase(water, 0, list, 1, 250.0, 1.0e5, &pt);
    if (s == TL_STATUS_OK) put(o, (double)pt.phase), put(o, pt.gibbs), put(o, pt.molar_volume);
    break;
  }
  case 11: case 12: {
    /* Calculations by name: a PH flash of the mixture, a PT flash of water. */
    tl_plan *plan = NULL;
    s = tl_plan_new(k == 11 ? "flash_ph" : "flash_pt", NULL, &plan);
    if (s != TL_STATUS_OK) break;
    const double args_ph[2] = {5.0e6, -1.8e5};
    const double args_pt[2] = {450.0, 1.0e6};
    const double one = 1.0;
    s = k == 11 ? tl_run(plan, ws, mix, args_ph, 2, feed3, 3, rec) : tl_run(plan, NULL, water, args_pt, 2, &one, 1, rec);
    if (s == TL_STATUS_OK) put_record(o, rec);
    tl_plan_free(plan);
    break;
  }
  case 13: {
    tl_bubble_dew_point bd;
    s = tl_dew_temperature(mix, 3.0e6, feed3, 3, NULL, &bd, NULL, 0);
    if (s == TL_STATUS_OK) put(o, bd.temperature), put(o, bd.incipient_molar_volume);
    break;
  }
  case 14: {
    /* A wrong call: the error status must be the same everywhere too. */
    s = tl_flash(mix, -1.0, 5.0e6, feed3, 3, NULL, r);
    break;
  }
  default: {
    tl_saturation_point sp;
    s = tl_saturation_temperature(water, 0, 2.0e6, NULL, &sp);
    if (s == TL_STATUS_OK) put(o, sp.temperature), put(o, sp.enthalpy_of_vaporization);
  }
  }
  o->status = s;
}

static int same_output(const output *a, const output *b) {
  return a->status == b->status && a->n == b->n && memcmp(a->v, b->v, a->n * sizeof(double)) == 0;
}

static output serial[NITEMS];
static output threaded[NTHREADS][NITEMS];
#define ROUNDS 5

static void *worker(void *arg) {
  int id = (int)(intptr_t)arg;
  tl_result *r = NULL;
  tl_record *rec = NULL;
  tl_workspace *ws = NULL;
  tl_result_new(&r);
  tl_record_new(&rec);
  tl_workspace_new(&ws);
  for (int round = 0; round < ROUNDS; ++round)
    for (int j = 0; j < NITEMS; ++j) {
      int k = (j + id * 2 + round) % NITEMS;
      output o;
      tl_workspace_reset(ws); /* the same cold start as the serial run */
      item(k, &o, r, rec, ws);
      if (round == 0) threaded[id][k] = o;
      else if (!same_output(&o, &threaded[id][k])) threaded[id][k].status = 9999; /* flagged below */
    }
  tl_result_free(r);
  tl_record_free(rec);
  tl_workspace_free(ws);
  return NULL;
}

int main(void) {
  const char *names[] = {"water", "carbon dioxide", "methane"};
  CHECK(tl_model_new(names, 3, TL_CUBIC_PENG_ROBINSON, &mix) == TL_STATUS_OK, "mixture model");
  CHECK(tl_model_from_json("{\"model\": \"iapws95\"}", &water) == TL_STATUS_OK, "IAPWS-95 model");
  CHECK(tl_solid_ice_ih_new(&ice) == TL_STATUS_OK, "ice Ih");
  CHECK(tl_solid_carbon_dioxide_new(mix, 1, &dry_ice) == TL_STATUS_OK, "solid CO2");
  if (failed) return 1;

  tl_result *r = NULL;
  tl_record *rec = NULL;
  tl_workspace *ws = NULL;
  tl_result_new(&r);
  tl_record_new(&rec);
  tl_workspace_new(&ws);
  int ok_items = 0;
  for (int k = 0; k < NITEMS; ++k) {
    tl_workspace_reset(ws);
    item(k, &serial[k], r, rec, ws);
    ok_items += serial[k].status == TL_STATUS_OK;
    if (serial[k].status != TL_STATUS_OK && k != 14) {
      char msg[512];
      tl_last_error_message(msg, sizeof msg, NULL);
      fprintf(stderr, "item %d: %s: %s\n", k, tl_status_name(serial[k].status), msg);
    }
    for (size_t i = 0; i < serial[k].n; ++i) CHECK(isfinite(serial[k].v[i]), "serial outputs are finite");
  }
  CHECK(ok_items == NITEMS - 1, "every item but the wrong call succeeds serially");
  CHECK(serial[14].status == TL_STATUS_INVALID_INPUT, "the wrong call is invalid input");
  tl_result_free(r);
  tl_record_free(rec);
  tl_workspace_free(ws);

  pthread_t th[NTHREADS];
  for (int i = 0; i < NTHREADS; ++i)
    CHECK(pthread_create(&th[i], NULL, worker, (void *)(intptr_t)i) == 0, "thread started");
  for (int i = 0; i < NTHREADS; ++i) pthread_join(th[i], NULL);

  for (int i = 0; i < NTHREADS; ++i)
    for (int k = 0; k < NITEMS; ++k) {
      const output *a = &threaded[i][k], *b = &serial[k];
      int same = same_output(a, b);
      if (!same) fprintf(stderr, "thread %d item %d differs from the serial call\n", i, k);
      CHECK(same, "a thread's outputs are bit-for-bit those of the serial calls");
    }

  tl_solid_free(ice);
  tl_solid_free(dry_ice);
  tl_model_free(mix);
  tl_model_free(water);
  printf("test_threads_c: %d passed, %d failed (%d threads x %d rounds x %d mixed calls)\n", passed, failed, NTHREADS,
         ROUNDS, NITEMS);
  return failed ? 1 : 0;
}
