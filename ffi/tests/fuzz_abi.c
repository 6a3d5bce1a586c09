/* A seeded random and byte-mutation fuzzer of the tieline C ABI.
 *
 * Every input is generated from (seed, index) alone, so any input can be replayed with
 * `fuzz_abi --seed S --start I --inputs 1 --verbose`. Each input is one call (or a short
 * chain of calls) of the ABI with arguments drawn from a structured generator: model JSON
 * (generated from the description grammar, or a valid description with its bytes mutated),
 * component names, flashes, stability tests, saturation and bubble/dew points, phase
 * properties, pure-substance phase diagrams with solids (ice Ih, solid CO2, fusion solids),
 * the solid-fluid flash and the frost point, parallel batches, and calculations by name through
 * tl_plan_new / tl_run / tl_record_* with arbitrary names, option JSON and argument and feed
 * arrays (NaN, inf, negative, huge, zero-length, mismatched lengths, NULL).
 *
 * The property checked on every input:
 *  - the process does not crash or abort (a signal handler names the input that did);
 *  - no Rust panic reaches the boundary (TL_STATUS_PANIC is a failure of the property);
 *  - every failure is a known status with a non-empty tl_last_error_message;
 *  - every success returns finite numbers (no NaN or inf read back as a value), except where
 *    the header documents NaN (the certificate when not computed; a failed batch point).
 *
 * usage: fuzz_abi [--inputs N] [--seed S] [--start I] [--seconds T] [--verbose] [--verbose-at I]
 * Exit status 0 when the property held on every input, 1 otherwise. */
#define _POSIX_C_SOURCE 200809L
#include "tieline.h"

#include <float.h>
#include <math.h>
#include <signal.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

/* ---- deterministic generator (SplitMix64) ---- */
static uint64_t rng_state;
static uint64_t next_u64(void) {
  uint64_t z = (rng_state += 0x9E3779B97F4A7C15ull);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
  return z ^ (z >> 31);
}
static uint32_t below(uint32_t n) { return n ? (uint32_t)(next_u64() % n) : 0; }
static int chance(uint32_t percent) { return below(100) < percent; }
static double uniform(double a, double b) { return a + (b - a) * (double)(next_u64() >> 11) * 0x1.0p-53; }
static double log_uniform(double a, double b) { return exp(uniform(log(a), log(b))); }

/* A double anywhere: special values, edges and random magnitudes. */
static double wild(void) {
  switch (below(16)) {
  case 0: return NAN;
  case 1: return INFINITY;
  case 2: return -INFINITY;
  case 3: return 0.0;
  case 4: return -0.0;
  case 5: return DBL_MIN;
  case 6: return 4.9406564584124654e-324;
  case 7: return DBL_MAX;
  case 8: return -DBL_MAX;
  case 9: return -uniform(0, 1000);
  case 10: return 1e300;
  case 11: {
    uint64_t bits = next_u64();
    double d;
    memcpy(&d, &bits, sizeof d);
    return d;
  }
  case 12: return log_uniform(1e-12, 1e12);
  case 13: return -log_uniform(1e-12, 1e12);
  case 14: return (double)below(10);
  default: return uniform(-1e6, 1e6);
  }
}
static double temperature(void) {
  if (chance(75)) return uniform(100.0, 800.0);
  if (chance(50)) return log_uniform(1e-3, 1e5);
  return wild();
}
static double pressure(void) {
  if (chance(75)) return log_uniform(1e3, 5e7);
  if (chance(50)) return log_uniform(1e-6, 1e12);
  return wild();
}
static double amount(void) {
  if (chance(90)) return chance(10) ? 0.0 : uniform(0.0, 1.0);
  return wild();
}

/* ---- bookkeeping ---- */
static unsigned long long inputs_run = 0, calls_ok = 0, calls_failed = 0, violations = 0;
static unsigned long long current_input = 0, seed = 1;
static const char *current_op = "setup";
static int verbose = 0;
static unsigned long long verbose_at = ~0ull; /* --verbose-at I: details of input I only */

static void on_signal(int sig) {
  char buf[256];
  int n = snprintf(buf, sizeof buf,
                   "\nfuzz_abi: signal %d in input %llu (operation %s); replay: fuzz_abi --seed %llu --start %llu "
                   "--inputs 1 --verbose\n",
                   sig, current_input, current_op, seed, current_input);
  if (n > 0) {
    ssize_t w = write(2, buf, (size_t)n);
    (void)w;
  }
  _exit(2);
}

/* Distinct kinds of violation (operation, what, detail up to its first '='), each printed
 * with the first input that showed it, and counted. */
#define MAX_KINDS 256
static char kind_key[MAX_KINDS][160];
static unsigned long long kind_count[MAX_KINDS], kind_first[MAX_KINDS];
static size_t num_kinds = 0;

static void violation(const char *what, const char *detail) {
  ++violations;
  char key[160];
  snprintf(key, sizeof key, "%s: %s %s", current_op, what, detail ? detail : "");
  char *eq = strchr(key, '=');
  if (eq) *eq = 0;
  for (size_t k = 0; k < num_kinds; ++k)
    if (!strcmp(kind_key[k], key)) {
      ++kind_count[k];
      if (verbose) fprintf(stderr, "fuzz_abi: VIOLATION (%s): %s %s\n", current_op, what, detail ? detail : "");
      return;
    }
  if (num_kinds < MAX_KINDS) {
    memcpy(kind_key[num_kinds], key, sizeof key);
    kind_count[num_kinds] = 1;
    kind_first[num_kinds] = current_input;
    ++num_kinds;
  }
  fprintf(stderr, "fuzz_abi: VIOLATION in input %llu (operation %s): %s %s\n", current_input, current_op, what,
          detail ? detail : "");
}

static int known_status(tl_status s) {
  return strcmp(tl_status_name(s), "TL_STATUS_UNKNOWN") != 0;
}

/* Checks a returned status: OK counts; a failure must be known, not a panic, and carry a
 * non-empty message. Returns whether the call succeeded. */
static int status_ok(tl_status s, const char *call) {
  if (s == TL_STATUS_OK) {
    ++calls_ok;
    return 1;
  }
  ++calls_failed;
  char msg[2048];
  size_t needed = 0;
  msg[0] = 0;
  tl_last_error_message(msg, sizeof msg, &needed);
  if (verbose) fprintf(stderr, "  %s -> %s: %s\n", call, tl_status_name(s), msg);
  if (s == TL_STATUS_PANIC) violation("panic reached the boundary:", msg);
  else if (!known_status(s)) violation("unknown status from", call);
  else if (msg[0] == 0 || needed <= 1) violation("empty error message from", call);
  return 0;
}

static void expect_finite(double x, const char *what) {
  if (!isfinite(x)) {
    char d[256];
    snprintf(d, sizeof d, "%.200s = %g", what, x);
    violation("non-finite value returned:", d);
  }
}
static void expect_finite_n(const double *x, size_t n, const char *what) {
  for (size_t i = 0; i < n; ++i) {
    if (isfinite(x[i])) continue;
    char d[200];
    snprintf(d, sizeof d, "%.150s[%zu]", what, i);
    expect_finite(x[i], d);
  }
}
static void show_model(const tl_model *m) {
  static char buf[1 << 16];
  size_t needed = 0;
  if (tl_model_to_json(m, buf, sizeof buf, &needed) == TL_STATUS_OK) fprintf(stderr, "  model %s\n", buf);
}
static void show_feed(const double *n, size_t len) {
  fprintf(stderr, "  feed (%zu)", len);
  for (size_t i = 0; n && i < len; ++i) fprintf(stderr, " %.17g", n[i]);
  fprintf(stderr, "\n");
}

/* ---- the models, solids and reusable handles ---- */
#define NFIXED 6
#define NFUZZED 4
static const tl_model *fixed_models[NFIXED];
static const tl_model *fuzzed_models[NFUZZED];
static size_t next_fuzzed = 0;
static const tl_solid *solids[8];
static size_t num_solids = 0;
static tl_context *contexts[NFIXED];
static tl_result *result;
static tl_record *record;
static tl_workspace *workspace;

static const char *fixed_json[NFIXED] = {
    "{\"model\":\"cubic\",\"kind\":\"peng_robinson\",\"components\":[\"methane\",\"propane\"]}",
    "{\"model\":\"cubic\",\"kind\":\"soave_redlich_kwong\",\"components\":[\"nitrogen\",\"methane\",\"carbon "
    "dioxide\",\"n-butane\"],\"kij\":[[0,2,-0.02],[1,2,0.09,0.0001]]}",
    "{\"model\":\"iapws95\"}",
    "{\"model\":\"cubic\",\"kind\":\"peng_robinson\",\"components\":[\"water\",\"carbon dioxide\",\"methane\"],"
    "\"kij\":[[0,1,0.2],[0,2,0.5]]}",
    "{\"model\":\"cubic\",\"kind\":\"peng_robinson\",\"components\":[\"methane\"],\"volume_shift\":\"peneloux\"}",
    "{\"model\":\"cubic\",\"kind\":\"peng_robinson78\",\"components\":[\"methane\",\"oxygen\",\"nitrogen\",\"water\","
    "\"carbon dioxide\",\"carbon monoxide\",\"hydrogen\"]}",
};

static const tl_model *any_model(void) {
  if (chance(20)) {
    const tl_model *m = fuzzed_models[below(NFUZZED)];
    if (m) return m;
  }
  return fixed_models[below(NFIXED)];
}
static size_t components_of(const tl_model *m) {
  size_t n = 0;
  tl_model_num_components(m, &n);
  return n;
}

/* A feed for a model of nc components: usually nc plausible amounts, sometimes the wrong
 * length, wild values or NULL. Returns the pointer to pass (may be NULL) and sets *len. */
static double feed_buf[64];
static const double *feed(size_t nc, size_t *len) {
  size_t n = nc;
  if (chance(8)) n = below((uint32_t)nc + 4);
  if (n > 64) n = 64;
  int wild_one = chance(10);
  for (size_t i = 0; i < n; ++i) feed_buf[i] = wild_one && chance(40) ? wild() : amount();
  if (chance(3)) memset(feed_buf, 0, sizeof feed_buf);
  *len = n;
  if (n == 0 && chance(50)) return NULL;
  if (chance(2)) return NULL;
  return feed_buf;
}

/* ---- text generation ---- */
static char text_buf[8192];
static const char *component_names[] = {
    "methane", "ethane", "propane", "n-butane", "isobutane", "n-pentane", "n-hexane", "n-decane",
    "nitrogen", "oxygen", "carbon dioxide", "carbon monoxide", "hydrogen", "water", "argon",
    "hydrogen sulfide", "ammonia", "benzene", "toluene", "METHANE", "74-82-8", "CO2", "H2O",
    "", "unobtainium", "methan", "n-butane ", "\xc3\xa9thane", "\xff\xfe", "a\"b", "{}", "[]",
};
#define N_COMPONENT_NAMES (sizeof component_names / sizeof component_names[0])

static void append(char *buf, size_t cap, const char *s) {
  size_t l = strlen(buf);
  size_t m = strlen(s);
  if (l + m + 1 < cap) memcpy(buf + l, s, m + 1);
}
static void append_number(char *buf, size_t cap) {
  char num[64];
  double x = chance(70) ? uniform(-2.0, 2.0) : wild();
  switch (below(8)) {
  case 0: snprintf(num, sizeof num, "%d", (int)below(12) - 2); break;
  case 1: snprintf(num, sizeof num, "1e999"); break;
  case 2: snprintf(num, sizeof num, "-1e999"); break;
  case 3: snprintf(num, sizeof num, "\"%g\"", x); break;
  default:
    if (isfinite(x)) snprintf(num, sizeof num, "%.17g", x);
    else snprintf(num, sizeof num, "%s", isnan(x) ? "NaN" : (x > 0 ? "Infinity" : "-Infinity"));
  }
  append(buf, cap, num);
}

/* A model description from the grammar of ModelDescription, with odd values. */
static void generate_model_json(char *buf, size_t cap) {
  buf[0] = 0;
  if (chance(8)) {
    append(buf, cap, chance(80) ? "{\"model\":\"iapws95\"}" : "{\"model\":\"iapws95\",\"x\":1}");
    return;
  }
  static const char *kinds[] = {"peng_robinson", "soave_redlich_kwong", "peng_robinson78", "van_der_waals", ""};
  append(buf, cap, "{\"model\":\"cubic\",\"kind\":\"");
  append(buf, cap, kinds[below(5) == 4 && chance(30) ? 4 : below(3)]);
  append(buf, cap, "\",\"components\":[");
  size_t nc = chance(5) ? 0 : 1 + below(chance(90) ? 4 : 40);
  for (size_t i = 0; i < nc; ++i) {
    if (i) append(buf, cap, ",");
    const char *name = component_names[chance(85) ? below(19) : below(N_COMPONENT_NAMES)];
    if (chance(25)) {
      append(buf, cap, "{\"name\":\"");
      append(buf, cap, name);
      append(buf, cap, "\"");
      static const char *keys[] = {"tc", "pc", "acentric"};
      for (int k = 0; k < 3; ++k) {
        if (!chance(50)) continue;
        append(buf, cap, ",\"");
        append(buf, cap, keys[k]);
        append(buf, cap, "\":");
        char num[64];
        double base = k == 0 ? 300.0 : (k == 1 ? 5e6 : 0.1);
        double x = chance(50) ? base * uniform(0.0, 3.0) : wild();
        if (isfinite(x)) snprintf(num, sizeof num, "%.17g", x);
        else snprintf(num, sizeof num, "%s", chance(50) ? "1e999" : "-1e999");
        append(buf, cap, num);
      }
      append(buf, cap, "}");
    } else {
      append(buf, cap, "\"");
      append(buf, cap, name);
      append(buf, cap, "\"");
    }
  }
  append(buf, cap, "]");
  if (chance(40)) {
    append(buf, cap, ",\"kij\":[");
    size_t rows = below(4);
    for (size_t r = 0; r < rows; ++r) {
      if (r) append(buf, cap, ",");
      append(buf, cap, "[");
      size_t len = chance(85) ? 3 + below(2) : below(6);
      for (size_t c = 0; c < len; ++c) {
        if (c) append(buf, cap, ",");
        if (c < 2 && chance(85)) {
          char num[16];
          snprintf(num, sizeof num, "%u", below((uint32_t)nc + 1));
          append(buf, cap, num);
        } else {
          append_number(buf, cap);
        }
      }
      append(buf, cap, "]");
    }
    append(buf, cap, "]");
  }
  if (chance(20)) {
    if (chance(50)) {
      append(buf, cap, chance(80) ? ",\"volume_shift\":\"peneloux\"" : ",\"volume_shift\":\"other\"");
    } else {
      append(buf, cap, ",\"volume_shift\":[");
      size_t len = chance(70) ? nc : below(6);
      for (size_t c = 0; c < len; ++c) {
        if (c) append(buf, cap, ",");
        if (chance(70)) {
          char num[64];
          snprintf(num, sizeof num, "%.17g", uniform(-1e-5, 1e-5));
          append(buf, cap, num);
        } else {
          append_number(buf, cap);
        }
      }
      append(buf, cap, "]");
    }
  }
  if (chance(3)) append(buf, cap, ",\"extra\":true");
  append(buf, cap, "}");
}

/* Byte-level mutation of a NUL-terminated text in place (flip, insert, delete, truncate,
 * splice a token). Keeps it NUL-terminated and within cap. */
static void mutate(char *buf, size_t cap) {
  static const char *tokens[] = {"{", "}", "[", "]", ",", ":", "\"", "\\", "null", "true", "1e999", "-0",
                                 "NaN", "\\u0000", "\xc3", "\xff", "18446744073709551616", "-1"};
  size_t n = 1 + below(6);
  for (size_t k = 0; k < n; ++k) {
    size_t len = strlen(buf);
    size_t at = len ? below((uint32_t)len) : 0;
    switch (below(5)) {
    case 0:
      if (len) buf[at] = (char)(buf[at] ^ (1u << below(8)));
      if (buf[at] == 0 && len) buf[at] = '0';
      break;
    case 1:
      if (len + 2 < cap) {
        memmove(buf + at + 1, buf + at, len - at + 1);
        buf[at] = (char)(1 + below(255));
      }
      break;
    case 2:
      if (len) memmove(buf + at, buf + at + 1, len - at);
      break;
    case 3: buf[at] = 0; break;
    default: {
      const char *t = tokens[below(sizeof tokens / sizeof tokens[0])];
      size_t tl = strlen(t);
      if (len + tl + 1 < cap) {
        memmove(buf + at + tl, buf + at, len - at + 1);
        memcpy(buf + at, t, tl);
      }
    }
    }
  }
}

/* ---- checks of successful outputs ---- */
static void check_properties(const tl_properties *p) {
  expect_finite_n(&p->temperature, (sizeof *p - offsetof(tl_properties, temperature)) / sizeof(double), "property");
}
static void check_point(const tl_pure_phase_point *p) {
  expect_finite_n(&p->temperature, 6, "pure phase point");
}
static void check_coexistence(const tl_coexistence *c) {
  expect_finite(c->temperature, "coexistence T");
  expect_finite(c->pressure, "coexistence p");
  check_point(&c->a);
  check_point(&c->b);
  expect_finite(c->delta_h, "delta_h");
  expect_finite(c->delta_s, "delta_s");
  expect_finite(c->delta_v, "delta_v");
  expect_finite(c->clapeyron_slope, "clapeyron slope");
}

static void check_result(const tl_model *m) {
  tl_result_kind kind = 0;
  if (!status_ok(tl_result_kind_of(result, &kind), "tl_result_kind_of")) return;
  size_t nc = 0;
  if (!status_ok(tl_result_num_components(result, &nc), "tl_result_num_components")) return;
  double buf[64];
  if (kind == TL_RESULT_KIND_STABILITY) {
    tl_stability_summary s;
    if (!status_ok(tl_result_stability(result, &s), "tl_result_stability")) return;
    expect_finite(s.min_tpd, "min_tpd");
    for (size_t k = 0; k < s.num_points && k < 8; ++k) {
      double tpd = 0;
      bool liq = 0;
      if (status_ok(tl_result_stationary_point(result, k, &tpd, &liq, buf, 64), "tl_result_stationary_point")) {
        expect_finite(tpd, "tpd");
        expect_finite_n(buf, nc, "stationary point composition");
      }
    }
    return;
  }
  if (kind != TL_RESULT_KIND_FLASH) return;
  double t = 0, p = 0, beta = 0;
  if (status_ok(tl_result_conditions(result, &t, &p), "tl_result_conditions")) {
    expect_finite(t, "T");
    expect_finite(p, "p");
  }
  if (status_ok(tl_result_vapor_fraction(result, &beta), "tl_result_vapor_fraction")) expect_finite(beta, "vapour fraction");
  size_t np = 0;
  if (!status_ok(tl_result_num_phases(result, &np), "tl_result_num_phases")) return;
  for (size_t k = 0; k < np; ++k) {
    tl_phase_info info;
    if (status_ok(tl_result_phase(result, k, &info), "tl_result_phase")) {
      expect_finite(info.amount, "phase amount");
      expect_finite(info.fraction, "phase fraction");
      expect_finite(info.molar_volume, "phase molar volume");
      expect_finite(info.z, "phase Z");
    }
    if (status_ok(tl_result_phase_composition(result, k, buf, 64), "tl_result_phase_composition"))
      expect_finite_n(buf, nc, "phase composition");
    if (status_ok(tl_result_phase_ln_phi(result, k, buf, 64), "tl_result_phase_ln_phi")) expect_finite_n(buf, nc, "ln phi");
    tl_properties props;
    if (m && status_ok(tl_result_phase_properties(result, m, k, &props), "tl_result_phase_properties"))
      check_properties(&props);
  }
  tl_mixture_properties mp;
  if (m && status_ok(tl_result_mixture_properties(result, m, &mp), "tl_result_mixture_properties"))
    expect_finite_n(&mp.molar_volume, sizeof mp / sizeof(double), "mixture property");
  tl_diagnostics d;
  if (status_ok(tl_result_diagnostics(result, &d), "tl_result_diagnostics")) {
    expect_finite(d.residual, "residual");
    expect_finite(d.gibbs, "G/RT");
    if (d.has_certificate) expect_finite(d.certificate, "certificate");
  }
  double tb = 0;
  tl_status s = tl_result_tie_line(result, &tb, buf, 64, NULL, 0);
  if (s == TL_STATUS_OK) {
    ++calls_ok;
    expect_finite(tb, "tie-line beta");
    expect_finite_n(buf, nc, "tie-line x");
  } else if (s != TL_STATUS_NOT_AVAILABLE) {
    status_ok(s, "tl_result_tie_line");
  }
  size_t needed = 0;
  s = tl_result_to_json(result, NULL, 0, &needed);
  if (s != TL_STATUS_BUFFER_TOO_SMALL) status_ok(s, "tl_result_to_json size");
}

static void check_record(void) {
  size_t nf = 0;
  if (!status_ok(tl_record_num_fields(record, &nf), "tl_record_num_fields")) return;
  static double vals[1 << 16];
  for (size_t i = 0; i < nf; ++i) {
    char name[128];
    size_t needed = 0;
    if (!status_ok(tl_record_field_name(record, i, name, sizeof name, &needed), "tl_record_field_name")) continue;
    size_t rows = 0, cols = 0;
    tl_status s = tl_record_numbers(record, name, NULL, 0, &needed, &rows, &cols);
    if (s == TL_STATUS_OK) {
      ++calls_ok;
      if (needed > sizeof vals / sizeof vals[0]) continue;
      if (status_ok(tl_record_numbers(record, name, vals, needed, &needed, &rows, &cols), "tl_record_numbers"))
        for (size_t k = 0; k < needed; ++k)
          if (!isfinite(vals[k])) {
            char d[200];
            snprintf(d, sizeof d, "record field %s[%zu] = %g", name, k, vals[k]);
            violation("non-finite value returned:", d);
            break;
          }
    } else if (s == TL_STATUS_NO_SOLUTION || s == TL_STATUS_INVALID_INPUT) {
      /* Absent, or a word/flag: the message must still be there. */
      status_ok(s, "tl_record_numbers (absent or not numbers)");
    } else {
      status_ok(s, "tl_record_numbers");
    }
  }
  size_t needed = 0;
  tl_status s = tl_record_to_json(record, NULL, 0, &needed);
  if (s != TL_STATUS_BUFFER_TOO_SMALL) status_ok(s, "tl_record_to_json size");
}

static tl_flash_options flash_options(void) {
  tl_flash_options o;
  tl_flash_options_default(&o);
  if (chance(80)) return o;
  if (chance(40)) o.tolerance = chance(50) ? log_uniform(1e-16, 1e-2) : wild();
  if (chance(30)) o.max_ss_iterations = chance(70) ? below(200) : (size_t)next_u64();
  if (chance(30)) o.max_newton_iterations = chance(70) ? below(100) : (size_t)next_u64();
  if (chance(30)) o.negative_flash = chance(50);
  if (chance(30)) o.certificate = chance(50);
  if (chance(20)) o.stability.tolerance = wild();
  if (chance(20)) o.stability.threshold = chance(50) ? uniform(-1, 1) : wild();
  if (chance(20)) o.stability.max_iterations = below(1000);
  if (chance(30)) o.max_phases = below(5);
  return o;
}

/* ---- the operations ---- */
static void op_model_json(void) {
  current_op = "tl_model_from_json";
  if (chance(50)) {
    generate_model_json(text_buf, sizeof text_buf);
  } else {
    text_buf[0] = 0;
    append(text_buf, sizeof text_buf, fixed_json[below(NFIXED)]);
    mutate(text_buf, sizeof text_buf);
  }
  if (chance(15)) mutate(text_buf, sizeof text_buf);
  if (verbose) fprintf(stderr, "  json: %s\n", text_buf);
  const tl_model *m = NULL;
  if (!status_ok(tl_model_from_json(chance(1) ? NULL : text_buf, &m), "tl_model_from_json")) return;
  size_t nc = components_of(m);
  for (size_t i = 0; i < nc; ++i) {
    double mm = 0;
    if (status_ok(tl_model_molar_mass(m, i, &mm), "tl_model_molar_mass")) expect_finite(mm, "molar mass");
  }
  /* The round trip through tl_model_to_json. */
  size_t needed = 0;
  if (tl_model_to_json(m, NULL, 0, &needed) == TL_STATUS_BUFFER_TOO_SMALL && needed < 1 << 20) {
    char *j = malloc(needed);
    if (status_ok(tl_model_to_json(m, j, needed, &needed), "tl_model_to_json")) {
      const tl_model *back = NULL;
      if (status_ok(tl_model_from_json(j, &back), "tl_model_from_json (round trip)")) tl_model_free(back);
    }
    free(j);
  }
  /* Keep it: later inputs use accepted odd models too. */
  tl_model_free(fuzzed_models[next_fuzzed]);
  fuzzed_models[next_fuzzed] = m;
  next_fuzzed = (next_fuzzed + 1) % NFUZZED;
}

static void op_model_names(void) {
  current_op = "tl_model_new / component look-ups";
  const char *names[48];
  size_t count = chance(5) ? 0 : 1 + below(chance(90) ? 4 : 45);
  for (size_t i = 0; i < count; ++i) {
    if (chance(10)) {
      static char junk[4][32];
      char *j = junk[i % 4];
      size_t l = below(31);
      for (size_t k = 0; k < l; ++k) j[k] = (char)(1 + below(255));
      j[l] = 0;
      names[i] = j;
    } else {
      names[i] = component_names[chance(85) ? below(19) : below(N_COMPONENT_NAMES)];
    }
  }
  if (count && chance(2)) names[below((uint32_t)count)] = NULL;
  tl_cubic_kind kind = chance(90) ? 1 + below(3) : (tl_cubic_kind)next_u64();
  const tl_model *m = NULL;
  if (!status_ok(tl_model_new(chance(1) ? NULL : names, count, kind, &m), "tl_model_new")) return;
  size_t nc = components_of(m);
  for (int k = 0; k < 4; ++k) {
    size_t idx = chance(80) ? below((uint32_t)nc + 1) : (size_t)next_u64();
    char buf[64];
    size_t len = chance(70) ? sizeof buf : below(8);
    size_t needed = 0;
    tl_status s = tl_model_component_name(m, idx, buf, len, &needed);
    if (s == TL_STATUS_OK) {
      ++calls_ok;
      if (strlen(buf) + 1 != needed) violation("component name length", buf);
    } else {
      status_ok(s, "tl_model_component_name");
      if (idx < nc && s != TL_STATUS_BUFFER_TOO_SMALL) violation("component name of a valid index failed", NULL);
    }
    double mm = 0;
    if (status_ok(tl_model_molar_mass(m, idx, &mm), "tl_model_molar_mass")) expect_finite(mm, "molar mass");
  }
  tl_model_free(m);
}

static void op_flash(void) {
  const tl_model *m = any_model();
  size_t len = 0;
  const double *n = feed(components_of(m), &len);
  double t = temperature(), p = pressure();
  tl_flash_options o = flash_options();
  const tl_flash_options *op = chance(50) ? &o : NULL;
  tl_status s;
  int which = (int)below(3);
  if (which == 0) {
    current_op = "tl_flash";
    s = tl_flash(m, t, p, n, len, op, result);
  } else if (which == 1) {
    current_op = "tl_context_flash";
    size_t k = below(NFIXED);
    if (chance(5)) tl_context_reset(contexts[k]);
    m = fixed_models[k];
    n = feed(components_of(m), &len);
    s = tl_context_flash(contexts[k], t, p, n, len, op, result);
  } else {
    current_op = "tl_stability";
    tl_stability_options so;
    tl_stability_options_default(&so);
    if (chance(20)) so.tolerance = wild();
    if (chance(20)) so.threshold = wild();
    if (chance(20)) so.max_iterations = below(2000);
    s = tl_stability(m, t, p, n, len, chance(50) ? &so : NULL, result);
  }
  if (verbose) {
    fprintf(stderr, "  T=%.17g p=%.17g\n", t, p);
    show_model(m);
    show_feed(n, len);
  }
  if (status_ok(s, current_op)) check_result(m);
}

static void op_saturation(void) {
  const tl_model *m = any_model();
  size_t nc = components_of(m);
  tl_saturation_options o;
  tl_saturation_options_default(&o);
  if (chance(20)) o.tolerance = chance(50) ? log_uniform(1e-16, 1e-2) : wild();
  if (chance(20)) o.max_iterations = below(300);
  const tl_saturation_options *op = chance(50) ? &o : NULL;
  size_t comp = chance(90) ? below((uint32_t)nc) : below((uint32_t)nc + 3);
  double buf[64];
  switch (below(6)) {
  case 0: {
    current_op = "tl_saturation_pressure";
    tl_saturation_point sp;
    if (status_ok(tl_saturation_pressure(m, comp, temperature(), op, &sp), current_op))
      expect_finite_n(&sp.temperature, 8, "saturation point");
    break;
  }
  case 1: {
    current_op = "tl_saturation_temperature";
    tl_saturation_point sp;
    if (status_ok(tl_saturation_temperature(m, comp, pressure(), op, &sp), current_op))
      expect_finite_n(&sp.temperature, 8, "saturation point");
    break;
  }
  default: {
    size_t len = 0;
    const double *n = feed(nc, &len);
    tl_bubble_dew_point bd;
    size_t ilen = chance(80) ? 64 : below(4);
    double *inc = chance(80) ? buf : NULL;
    tl_status s;
    int k = (int)below(4);
    if (k == 0) current_op = "tl_bubble_pressure", s = tl_bubble_pressure(m, temperature(), n, len, op, &bd, inc, ilen);
    else if (k == 1) current_op = "tl_dew_pressure", s = tl_dew_pressure(m, temperature(), n, len, op, &bd, inc, ilen);
    else if (k == 2)
      current_op = "tl_bubble_temperature", s = tl_bubble_temperature(m, pressure(), n, len, op, &bd, inc, ilen);
    else current_op = "tl_dew_temperature", s = tl_dew_temperature(m, pressure(), n, len, op, &bd, inc, ilen);
    if (status_ok(s, current_op)) {
      expect_finite_n(&bd.temperature, 5, "bubble/dew point");
      if (inc) expect_finite_n(buf, nc, "incipient composition");
    }
  }
  }
}

static void op_properties(void) {
  current_op = "tl_phase_properties";
  const tl_model *m = any_model();
  size_t nc = components_of(m);
  size_t len = 0;
  const double *n = feed(nc, &len);
  tl_root_choice root = chance(90) ? below(3) : (tl_root_choice)next_u64();
  tl_properties props;
  double lnphi[64];
  size_t llen = chance(80) ? 64 : below(4);
  double *lp = chance(70) ? lnphi : NULL;
  double t = temperature(), p = pressure();
  if (verbose) {
    fprintf(stderr, "  T=%.17g p=%.17g root=%u\n", t, p, root);
    show_model(m);
    show_feed(n, len);
  }
  if (status_ok(tl_phase_properties(m, t, p, n, len, root, &props, lp, llen), current_op)) {
    check_properties(&props);
    if (lp) expect_finite_n(lnphi, nc, "ln phi");
  }
}

static tl_pure_phase any_phase(void) {
  static const tl_pure_phase phases[] = {TL_PURE_LIQUID, TL_PURE_VAPOR, TL_PURE_SOLID, TL_PURE_SOLID + 1};
  return chance(90) ? phases[below(4)] : (tl_pure_phase)next_u64();
}

static void op_solids(void) {
  /* Water (IAPWS-95 or the cubic mixture) with ice; CO2 of the cubic mixture with solid CO2;
   * fusion solids with odd data. */
  int which = (int)below(10);
  const tl_model *m = which < 4 ? fixed_models[2] : fixed_models[3];
  size_t comp = chance(90) ? (which < 4 ? 0 : below(2)) : below(5);
  const tl_solid *list[8];
  size_t ns = 0;
  for (size_t i = 0; i < num_solids; ++i)
    if (chance(60)) list[ns++] = solids[i];
  if (chance(5)) { /* any count up to 4, repeats allowed (the same solid twice) */
    ns = below(5);
    for (size_t i = 0; i < ns; ++i) list[i] = solids[below((uint32_t)num_solids)];
  }
  const tl_solid *const *sp = ns == 0 && chance(50) ? NULL : list;
  double guess = chance(50) ? temperature() : pressure();
  const double *g = chance(50) ? &guess : NULL;
  switch (below(9)) {
  case 0: {
    current_op = "tl_pure_stable_phase";
    tl_pure_phase_point pt;
    if (status_ok(tl_pure_stable_phase(m, comp, sp, ns, temperature(), pressure(), &pt), current_op)) check_point(&pt);
    break;
  }
  case 1: {
    current_op = "tl_pure_coexistence_temperature";
    tl_coexistence c;
    if (status_ok(tl_pure_coexistence_temperature(m, comp, sp, ns, any_phase(), any_phase(), pressure(), g, &c),
                  current_op))
      check_coexistence(&c);
    break;
  }
  case 2: {
    current_op = "tl_pure_coexistence_pressure";
    tl_coexistence c;
    if (status_ok(tl_pure_coexistence_pressure(m, comp, sp, ns, any_phase(), any_phase(), temperature(), g, &c),
                  current_op))
      check_coexistence(&c);
    break;
  }
  case 3: {
    current_op = "tl_pure_triple_point";
    tl_triple_point tp;
    size_t solid = chance(90) ? below((uint32_t)ns + 1) : (size_t)next_u64();
    if (status_ok(tl_pure_triple_point(m, comp, sp, ns, solid, g, &tp), current_op)) {
      expect_finite(tp.temperature, "triple T");
      expect_finite(tp.pressure, "triple p");
      check_point(&tp.solid);
      check_point(&tp.liquid);
      check_point(&tp.vapor);
      expect_finite(tp.residual, "triple residual");
    }
    break;
  }
  case 4: {
    current_op = "tl_pure_phase_state";
    tl_pure_phase_point pt;
    bool exists = 0;
    if (status_ok(tl_pure_phase_state(m, comp, sp, ns, any_phase(), temperature(), pressure(), &pt, &exists),
                  current_op) &&
        exists)
      check_point(&pt);
    break;
  }
  case 5: {
    current_op = "tl_pure_trace";
    double grid[6];
    size_t npts = below(7);
    tl_trace_axis axis = chance(90) ? 1 + below(2) : (tl_trace_axis)next_u64();
    double start = axis == TL_TRACE_PRESSURE ? pressure() : temperature();
    double step = chance(80) ? start * uniform(-0.02, 0.02) : wild();
    for (size_t i = 0; i < npts; ++i) grid[i] = chance(95) ? start + step * (double)i : wild();
    if (verbose) {
      show_model(m);
      fprintf(stderr, "  trace axis %u, %zu solids, grid", axis, ns);
      for (size_t i = 0; i < npts; ++i) fprintf(stderr, " %.17g", grid[i]);
      fprintf(stderr, "\n");
    }
    tl_coexistence out[6];
    size_t out_len = chance(90) ? 6 : below(6);
    if (status_ok(tl_pure_trace(m, comp, sp, ns, any_phase(), any_phase(), axis, chance(3) ? NULL : grid, npts, g,
                                out, out_len),
                  current_op))
      for (size_t i = 0; i < npts; ++i) check_coexistence(&out[i]);
    break;
  }
  case 6: case 7: {
    current_op = "tl_flash_with_solids";
    const tl_model *fm = fixed_models[3];
    size_t len = 0;
    const double *n = feed(3, &len);
    tl_solid_flash_summary sum;
    tl_solid_phase ph[8];
    size_t plen = chance(90) ? 8 : below(3);
    tl_flash_options o = flash_options();
    tl_result *r = chance(80) ? result : NULL;
    if (status_ok(tl_flash_with_solids(fm, sp, ns, temperature(), pressure(), n, len, chance(50) ? &o : NULL, r, &sum,
                                       chance(80) ? ph : NULL, plen),
                  current_op)) {
      expect_finite(sum.fluid_amount, "fluid amount");
      expect_finite(sum.residual, "solid flash residual");
      expect_finite(sum.min_absent_margin, "min absent margin");
      if (r) check_result(fm);
    }
    break;
  }
  default: {
    current_op = "tl_frost_point_temperature";
    const tl_model *fm = fixed_models[3];
    size_t len = 0;
    const double *n = feed(3, &len);
    double t = 0;
    const tl_solid *s = num_solids ? solids[below((uint32_t)num_solids)] : NULL;
    if (status_ok(tl_frost_point_temperature(fm, s, pressure(), n, len, temperature(), NULL, &t), current_op))
      expect_finite(t, "frost point");
  }
  }
}

static void op_fusion_solid(void) {
  current_op = "tl_solid_fusion_new";
  const tl_model *m = any_model();
  tl_fusion_data d = {90.7, 11.7e3, 940.0, 0.0, 3.0e-5, 60.0, 200.0, 1e8};
  double *f = &d.t_triple;
  for (int i = 0; i < 8; ++i)
    if (chance(15)) f[i] = chance(50) ? f[i] * uniform(0, 3) : wild();
  size_t comp = chance(90) ? 0 : below(4);
  if (verbose) {
    show_model(m);
    fprintf(stderr, "  fusion data %.17g %.17g %.17g %.17g %.17g %.17g %.17g %.17g, component %zu\n", d.t_triple,
            d.p_triple, d.enthalpy_of_fusion, d.delta_cp, d.solid_molar_volume, d.t_min, d.t_max, d.p_max, comp);
  }
  const tl_solid *s = NULL;
  if (!status_ok(tl_solid_fusion_new(m, comp, chance(3) ? NULL : &d, chance(30) ? NULL : "fuzz", &s), current_op))
    return;
  char buf[64];
  size_t needed = 0;
  status_ok(tl_solid_species(s, buf, sizeof buf, &needed), "tl_solid_species");
  tl_pure_phase_point pt;
  const tl_solid *list[1] = {s};
  current_op = "tl_pure_stable_phase (fusion solid)";
  double t = temperature(), p = pressure();
  if (verbose) fprintf(stderr, "  T=%.17g p=%.17g\n", t, p);
  if (status_ok(tl_pure_stable_phase(m, comp, list, 1, t, p, &pt), current_op)) check_point(&pt);
  tl_coexistence c;
  current_op = "tl_pure_coexistence_pressure (fusion solid)";
  if (status_ok(tl_pure_coexistence_pressure(m, comp, list, 1, TL_PURE_SOLID, chance(50) ? TL_PURE_LIQUID : TL_PURE_VAPOR,
                                             d.t_triple * uniform(0.8, 1.2), NULL, &c),
                current_op))
    check_coexistence(&c);
  tl_solid_free(s);
}

static void op_batch(void) {
  current_op = "tl_flash_batch";
  const tl_model *m = any_model();
  size_t nc = components_of(m);
  enum { MAXP = 16 };
  double t[MAXP], p[MAXP], feeds[MAXP * 8];
  size_t npts = below(MAXP + 1);
  for (size_t i = 0; i < npts; ++i) t[i] = temperature(), p[i] = pressure();
  size_t flen = chance(50) ? nc : nc * npts;
  if (chance(5)) flen = below(MAXP * 8);
  if (flen > MAXP * 8) flen = nc;
  if (flen > MAXP * 8) return;
  for (size_t i = 0; i < flen; ++i) feeds[i] = amount();
  size_t maxph = chance(90) ? 3 : below(3);
  tl_status st[MAXP];
  size_t nph[MAXP];
  tl_phase_kind kinds[MAXP * 3];
  double frac[MAXP * 3], vol[MAXP * 3], comp[MAXP * 3 * 8];
  tl_batch_output out = {npts, maxph, st, nph, kinds, frac, vol, nc <= 8 ? comp : NULL};
  size_t threads = chance(90) ? below(3) : below(300);
  if (!status_ok(tl_flash_batch(m, t, p, npts, feeds, flen, NULL, threads, &out), current_op)) return;
  for (size_t i = 0; i < npts; ++i) {
    if (st[i] != TL_STATUS_OK) {
      if (st[i] == TL_STATUS_PANIC || !known_status(st[i])) violation("batch point status", tl_status_name(st[i]));
      continue;
    }
    for (size_t k = 0; k < nph[i] && k < maxph; ++k) {
      expect_finite(frac[i * maxph + k], "batch phase fraction");
      expect_finite(vol[i * maxph + k], "batch molar volume");
      if (nc <= 8) expect_finite_n(&comp[(i * maxph + k) * nc], nc, "batch composition");
    }
  }
}

/* Calculations by name: a valid or mutated name, options JSON built from the description's
 * keys with odd values (or garbage), argument and feed arrays of any length. */
static size_t calc_count;
static char calc_names[64][64];

static void option_json(char *buf, size_t cap, const char *name) {
  buf[0] = 0;
  if (chance(30)) return; /* NULL options */
  if (chance(10)) {
    append(buf, cap, "{}");
    return;
  }
  static const char *keys[] = {"tolerance", "max_iterations", "max_ss_iterations", "max_newton_iterations",
                               "negative_flash", "certificate", "max_phases", "extra_species", "threads",
                               "temperature_guess", "pressure_guess", "step", "max_points", "unknown_key",
                               "species", "initial_temperature", "phases", "t_min", "t_max"};
  (void)name;
  append(buf, cap, "{");
  size_t nk = below(4);
  for (size_t k = 0; k < nk; ++k) {
    if (k) append(buf, cap, ",");
    append(buf, cap, "\"");
    append(buf, cap, keys[below(sizeof keys / sizeof keys[0])]);
    append(buf, cap, "\":");
    switch (below(6)) {
    case 0: append(buf, cap, chance(50) ? "true" : "false"); break;
    case 1: append(buf, cap, "[\"OH\",\"H\",\"O\",\"NO\"]"); break;
    case 2: append(buf, cap, "null"); break;
    case 3: {
      char num[32];
      snprintf(num, sizeof num, "%u", below(chance(80) ? 300 : 2000000000u));
      append(buf, cap, num);
      break;
    }
    default: append_number(buf, cap);
    }
  }
  append(buf, cap, "}");
  if (chance(10)) mutate(buf, cap);
}

static void op_calculation(void) {
  current_op = "tl_plan_new / tl_run";
  char name[96];
  if (chance(92) && calc_count) {
    snprintf(name, sizeof name, "%.63s", calc_names[below((uint32_t)calc_count)]);
  } else {
    snprintf(name, sizeof name, "%.63s", calc_count ? calc_names[below((uint32_t)calc_count)] : "flash_pt");
    mutate(name, sizeof name);
  }
  char opts[1024];
  option_json(opts, sizeof opts, name);
  if (verbose) fprintf(stderr, "  calculation '%s' options %s\n", name, opts[0] ? opts : "NULL");
  tl_plan *plan = NULL;
  if (!status_ok(tl_plan_new(name, opts[0] ? opts : NULL, &plan), "tl_plan_new")) return;
  /* Arguments: the description says how many; usually that many plausible values. */
  double args[8];
  size_t nargs = 2;
  if (strstr(name, "envelope") || strstr(name, "critical")) nargs = 0;
  if (chance(10)) nargs = below(6);
  for (size_t i = 0; i < nargs; ++i) {
    switch (below(5)) {
    case 0: args[i] = temperature(); break;
    case 1: args[i] = pressure(); break;
    case 2: args[i] = uniform(-3e5, 1e5); break; /* an enthalpy or energy, J/mol */
    case 3: args[i] = chance(50) ? uniform(-300, 300) : log_uniform(1e-5, 10); break; /* S or V */
    default: args[i] = chance(80) ? temperature() : wild();
    }
  }
  /* The common cases: (T, p) for flash-like calculations with T first. */
  if (nargs == 2 && chance(40) && strstr(name, "_pt")) args[0] = temperature(), args[1] = pressure();
  if (nargs == 2 && chance(40) && (strstr(name, "_ph") || strstr(name, "_hp") || strstr(name, "_ps") || strstr(name, "_sp")))
    args[0] = pressure(), args[1] = uniform(-3e5, 5e4);
  const tl_model *m = any_model();
  size_t len = 0;
  const double *n = feed(components_of(m), &len);
  tl_workspace *ws = chance(50) ? workspace : NULL;
  if (chance(3)) tl_workspace_reset(workspace);
  if (verbose) {
    fprintf(stderr, "  args");
    for (size_t i = 0; i < nargs; ++i) fprintf(stderr, " %g", args[i]);
    fprintf(stderr, " feed");
    for (size_t i = 0; n && i < len; ++i) fprintf(stderr, " %g", n[i]);
    fprintf(stderr, "\n");
  }
  if (status_ok(tl_run(plan, ws, m, chance(2) ? NULL : args, nargs, n, len, record), "tl_run")) check_record();
  tl_plan_free(plan);
}

static void op_misc(void) {
  current_op = "lookups";
  char buf[256];
  size_t needed = 0;
  size_t len = chance(70) ? sizeof buf : below(8);
  switch (below(4)) {
  case 0: status_ok(tl_calculation_name(chance(80) ? below((uint32_t)calc_count + 2) : (size_t)next_u64(), buf, len, &needed), "tl_calculation_name"); break;
  case 1: {
    char name[96];
    snprintf(name, sizeof name, "%.63s", calc_count ? calc_names[below((uint32_t)calc_count)] : "x");
    if (chance(30)) mutate(name, sizeof name);
    tl_status s = tl_calculation_describe(name, NULL, 0, &needed);
    if (s != TL_STATUS_BUFFER_TOO_SMALL) status_ok(s, "tl_calculation_describe");
    break;
  }
  case 2: {
    double v = 0;
    char field[64];
    snprintf(field, sizeof field, "%s", chance(50) ? "temperature" : "pressure");
    if (chance(50)) mutate(field, sizeof field);
    tl_status s = tl_record_number(record, field, &v);
    if (s == TL_STATUS_OK) {
      ++calls_ok;
      expect_finite(v, "record number");
    } else {
      status_ok(s, "tl_record_number");
    }
    break;
  }
  default: {
    const char *u = tl_status_name((uint32_t)next_u64());
    if (!u || !*u) violation("tl_status_name empty", NULL);
  }
  }
}

static void one_input(void) {
  uint32_t r = below(100);
  if (r < 14) op_model_json();
  else if (r < 20) op_model_names();
  else if (r < 44) op_flash();
  else if (r < 54) op_saturation();
  else if (r < 62) op_properties();
  else if (r < 68) op_solids();
  else if (r < 70) op_fusion_solid();
  else if (r < 73) op_batch();
  else if (r < 95) op_calculation();
  else op_misc();
}

int main(int argc, char **argv) {
  unsigned long long inputs = 20000, start = 0;
  double seconds = 0;
  for (int i = 1; i < argc; ++i) {
    if (!strcmp(argv[i], "--inputs") && i + 1 < argc) inputs = strtoull(argv[++i], NULL, 10);
    else if (!strcmp(argv[i], "--seed") && i + 1 < argc) seed = strtoull(argv[++i], NULL, 10);
    else if (!strcmp(argv[i], "--start") && i + 1 < argc) start = strtoull(argv[++i], NULL, 10);
    else if (!strcmp(argv[i], "--seconds") && i + 1 < argc) seconds = strtod(argv[++i], NULL);
    else if (!strcmp(argv[i], "--verbose")) verbose = 1;
    else if (!strcmp(argv[i], "--verbose-at") && i + 1 < argc) verbose_at = strtoull(argv[++i], NULL, 10);
    else {
      fprintf(stderr, "usage: fuzz_abi [--inputs N] [--seed S] [--start I] [--seconds T] [--verbose] [--verbose-at I]\n");
      return 2;
    }
  }
  signal(SIGSEGV, on_signal);
  signal(SIGABRT, on_signal);
  signal(SIGBUS, on_signal);
  signal(SIGFPE, on_signal);
  signal(SIGILL, on_signal);

  for (int k = 0; k < NFIXED; ++k) {
    if (tl_model_from_json(fixed_json[k], &fixed_models[k]) != TL_STATUS_OK ||
        tl_context_new(fixed_models[k], &contexts[k]) != TL_STATUS_OK) {
      fprintf(stderr, "fuzz_abi: could not build fixed model %d\n", k);
      return 2;
    }
  }
  if (tl_result_new(&result) || tl_record_new(&record) || tl_workspace_new(&workspace)) return 2;
  if (tl_solid_ice_ih_new(&solids[num_solids]) == TL_STATUS_OK) ++num_solids;
  if (tl_solid_carbon_dioxide_new(fixed_models[3], 1, &solids[num_solids]) == TL_STATUS_OK) ++num_solids;
  calc_count = tl_calculation_count();
  if (calc_count > 64) calc_count = 64;
  for (size_t i = 0; i < calc_count; ++i) {
    size_t needed = 0;
    tl_calculation_name(i, calc_names[i], sizeof calc_names[i], &needed);
  }

  struct timespec t0, t1;
  clock_gettime(CLOCK_MONOTONIC, &t0);
  double elapsed = 0;
  for (unsigned long long i = start; i < start + inputs; ++i) {
    current_input = i;
    rng_state = seed * 0x2545F4914F6CDD1Dull ^ (i + 1) * 0x9E3779B97F4A7C15ull;
    next_u64();
    if (verbose_at != ~0ull) verbose = i == verbose_at;
    if (verbose) fprintf(stderr, "input %llu\n", i);
    one_input();
    ++inputs_run;
    if ((inputs_run & 1023) == 0) {
      clock_gettime(CLOCK_MONOTONIC, &t1);
      elapsed = (double)(t1.tv_sec - t0.tv_sec) + 1e-9 * (double)(t1.tv_nsec - t0.tv_nsec);
      if ((inputs_run & 0xFFFF) == 0)
        fprintf(stderr, "fuzz_abi: %llu inputs, %.0f s, %llu violations\n", inputs_run, elapsed, violations);
      if (seconds > 0 && elapsed > seconds) break;
    }
  }
  clock_gettime(CLOCK_MONOTONIC, &t1);
  elapsed = (double)(t1.tv_sec - t0.tv_sec) + 1e-9 * (double)(t1.tv_nsec - t0.tv_nsec);
  printf("fuzz_abi: seed %llu, inputs %llu..%llu: %llu inputs, %llu calls ok, %llu calls failed with a typed error, "
         "%llu violations, %.1f s\n",
         seed, start, start + inputs_run, inputs_run, calls_ok, calls_failed, violations, elapsed);

  for (size_t k = 0; k < num_kinds; ++k)
    printf("  %llu x [first in input %llu] %s\n", kind_count[k], kind_first[k], kind_key[k]);

  for (int k = 0; k < NFIXED; ++k) {
    tl_context_free(contexts[k]);
    tl_model_free(fixed_models[k]);
  }
  for (int k = 0; k < NFUZZED; ++k) tl_model_free(fuzzed_models[k]);
  for (size_t k = 0; k < num_solids; ++k) tl_solid_free(solids[k]);
  tl_result_free(result);
  tl_record_free(record);
  tl_workspace_free(workspace);
  return violations ? 1 : 0;
}
