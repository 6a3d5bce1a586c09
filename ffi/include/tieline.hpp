// tieline.hpp — header-only C++17 wrapper of the tieline C ABI (tieline.h).
//
// RAII classes own the C handles (Model, Context, Result); every failing call throws
// tieline::Error, which carries the tl_status and the library's message. Inputs are taken as
// tieline::Span (built implicitly from std::vector<double>, std::array, an initializer list,
// or a pointer and a length). SI units everywhere (K, Pa, mol, m3, J).
//
// Thread safety follows the C handles: a Model may be shared by any number of threads (copies
// share the same immutable model); a Context and a Result are used by one thread at a time.
#ifndef TIELINE_HPP
#define TIELINE_HPP

#include "tieline.h"

#include <array>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <initializer_list>
#include <optional>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

namespace tieline {

/// An error reported by the library: the status and the message of tl_last_error_message.
class Error : public std::runtime_error {
public:
    Error(tl_status status, const std::string& message)
        : std::runtime_error(std::string(tl_status_name(status)) + ": " + message), status_(status),
          message_(message) {}
    /// The status code.
    tl_status status() const noexcept { return status_; }
    /// The library's message alone (what() prefixes the status name).
    const std::string& message() const noexcept { return message_; }

private:
    tl_status status_;
    std::string message_;
};

namespace detail {
inline std::string last_error() {
    size_t needed = 0;
    tl_last_error_message(nullptr, 0, &needed);
    std::string s(needed, '\0');
    if (needed > 0) {
        tl_last_error_message(&s[0], s.size(), &needed);
        s.resize(needed - 1);
    }
    return s;
}

inline void check(tl_status s) {
    if (s != TL_STATUS_OK) throw Error(s, last_error());
}

// Calls f(buf, len, &needed) twice: once to size, once to fill.
template <class F> std::string text(F&& f) {
    size_t needed = 0;
    tl_status s = f(nullptr, 0, &needed);
    if (s != TL_STATUS_OK && s != TL_STATUS_BUFFER_TOO_SMALL) check(s);
    std::string out(needed, '\0');
    check(f(&out[0], out.size(), &needed));
    out.resize(needed - 1);
    return out;
}
} // namespace detail

/// A read-only view of doubles: from a vector, an array, an initializer list (valid for the
/// full expression of the call) or a pointer and a length.
class Span {
public:
    Span(const double* data, size_t size) noexcept : data_(data), size_(size) {}
    Span(const std::vector<double>& v) noexcept : data_(v.data()), size_(v.size()) {}
    template <size_t N> Span(const std::array<double, N>& a) noexcept : data_(a.data()), size_(N) {}
    // The list lives until the end of the full expression of the call it is passed to.
    Span(std::initializer_list<double> l) noexcept : data_(nullptr), size_(l.size()) { data_ = l.begin(); }
    const double* data() const noexcept { return data_; }
    size_t size() const noexcept { return size_; }

private:
    const double* data_;
    size_t size_;
};

/// The library version string, e.g. "0.1.0".
inline std::string version() { return tl_version(); }

/// Which cubic equation of state.
enum class CubicKind : uint32_t {
    PengRobinson = TL_CUBIC_PENG_ROBINSON,
    PengRobinson78 = TL_CUBIC_PENG_ROBINSON78,
    SoaveRedlichKwong = TL_CUBIC_SOAVE_REDLICH_KWONG,
};

/// Which volume root a phase is evaluated on.
enum class Root : uint32_t {
    Stable = TL_ROOT_STABLE,
    Liquid = TL_ROOT_LIQUID,
    Vapor = TL_ROOT_VAPOR,
};

/// Default options (plain C structs; change fields as needed).
inline tl_flash_options default_flash_options() {
    tl_flash_options o;
    detail::check(tl_flash_options_default(&o));
    return o;
}
inline tl_stability_options default_stability_options() {
    tl_stability_options o;
    detail::check(tl_stability_options_default(&o));
    return o;
}
inline tl_saturation_options default_saturation_options() {
    tl_saturation_options o;
    detail::check(tl_saturation_options_default(&o));
    return o;
}

/// A bubble or dew point with the incipient phase's mole fractions.
struct BubbleDew {
    tl_bubble_dew_point point;
    std::vector<double> incipient;
};

/// Batch flash output: per point status and phase count, per phase slot kind, fraction,
/// molar volume, and composition (point, slot, component; row-major).
struct BatchResult {
    size_t points = 0, max_phases = 0, components = 0;
    std::vector<tl_status> status;
    std::vector<size_t> num_phases;
    std::vector<tl_phase_kind> phase_kind;
    std::vector<double> phase_fraction, phase_molar_volume, phase_composition;
    /// Mole fraction of component i in phase slot k of point p.
    double composition(size_t p, size_t k, size_t i) const {
        return phase_composition[(p * max_phases + k) * components + i];
    }
};

class Result;

/// A thermodynamic model. Copies share the same immutable model (reference counted).
class Model {
public:
    /// A cubic equation of state for components named in the embedded data bank.
    static Model from_names(const std::vector<std::string>& names, CubicKind kind = CubicKind::PengRobinson) {
        auto p = pointers(names);
        const tl_model* m = nullptr;
        detail::check(tl_model_new(p.data(), p.size(), static_cast<tl_cubic_kind>(kind), &m));
        return Model(m);
    }
    /// A model from JSON text: a model description or a full model (tl_model_to_json).
    static Model from_json(const std::string& json) {
        const tl_model* m = nullptr;
        detail::check(tl_model_from_json(json.c_str(), &m));
        return Model(m);
    }
    /// Components looked up in a user component file (TOML text).
    static Model from_component_toml(const std::string& toml, const std::vector<std::string>& names,
                                     CubicKind kind = CubicKind::PengRobinson) {
        auto p = pointers(names);
        const tl_model* m = nullptr;
        detail::check(tl_model_from_component_toml(toml.c_str(), p.data(), p.size(),
                                                   static_cast<tl_cubic_kind>(kind), &m));
        return Model(m);
    }
    /// Components looked up in a user component file (TOML file path).
    static Model from_component_file(const std::string& path, const std::vector<std::string>& names,
                                     CubicKind kind = CubicKind::PengRobinson) {
        auto p = pointers(names);
        const tl_model* m = nullptr;
        detail::check(tl_model_from_component_file(path.c_str(), p.data(), p.size(),
                                                   static_cast<tl_cubic_kind>(kind), &m));
        return Model(m);
    }

    Model(const Model& o) : m_(nullptr) {
        if (o.m_) detail::check(tl_model_clone(o.m_, &m_));
    }
    Model(Model&& o) noexcept : m_(o.m_) { o.m_ = nullptr; }
    Model& operator=(Model o) noexcept {
        std::swap(m_, o.m_);
        return *this;
    }
    ~Model() { tl_model_free(m_); }

    /// The C handle (still owned by this object).
    const tl_model* get() const noexcept { return m_; }

    size_t num_components() const {
        size_t n = 0;
        detail::check(tl_model_num_components(m_, &n));
        return n;
    }
    std::string component_name(size_t i) const {
        return detail::text([&](char* b, size_t l, size_t* n) { return tl_model_component_name(m_, i, b, l, n); });
    }
    /// Molar mass of component i, kg/mol.
    double molar_mass(size_t i) const {
        double v = 0;
        detail::check(tl_model_molar_mass(m_, i, &v));
        return v;
    }
    std::string to_json() const {
        return detail::text([&](char* b, size_t l, size_t* n) { return tl_model_to_json(m_, b, l, n); });
    }

    /// One-shot PT flash (cold start). For repeated calls use a Context.
    inline Result flash(double t, double p, Span n, const tl_flash_options* opts = nullptr) const;
    /// Stability test of a phase of amounts n at (t, p).
    inline Result stability(double t, double p, Span n, const tl_stability_options* opts = nullptr) const;

    /// Parallel batch of PT flashes (see tl_flash_batch); feeds holds nc or npts*nc amounts.
    BatchResult flash_batch(Span t, Span p, Span feeds, size_t threads = 0, size_t max_phases = 2,
                            const tl_flash_options* opts = nullptr) const {
        if (t.size() != p.size())
            throw Error(TL_STATUS_INVALID_INPUT, "temperature and pressure differ in length");
        BatchResult r;
        r.points = t.size();
        r.max_phases = max_phases;
        r.components = num_components();
        r.status.resize(r.points);
        r.num_phases.resize(r.points);
        r.phase_kind.resize(r.points * max_phases);
        r.phase_fraction.resize(r.points * max_phases);
        r.phase_molar_volume.resize(r.points * max_phases);
        r.phase_composition.resize(r.points * max_phases * r.components);
        tl_batch_output out{r.points,
                            max_phases,
                            r.status.data(),
                            r.num_phases.data(),
                            r.phase_kind.data(),
                            r.phase_fraction.data(),
                            r.phase_molar_volume.data(),
                            r.phase_composition.data()};
        detail::check(tl_flash_batch(m_, t.data(), p.data(), t.size(), feeds.data(), feeds.size(), opts, threads,
                                     &out));
        return r;
    }

    /// Vapour pressure of component i at t.
    tl_saturation_point saturation_pressure(size_t i, double t, const tl_saturation_options* o = nullptr) const {
        tl_saturation_point s;
        detail::check(tl_saturation_pressure(m_, i, t, o, &s));
        return s;
    }
    /// Boiling temperature of component i at p.
    tl_saturation_point saturation_temperature(size_t i, double p, const tl_saturation_options* o = nullptr) const {
        tl_saturation_point s;
        detail::check(tl_saturation_temperature(m_, i, p, o, &s));
        return s;
    }
    BubbleDew bubble_pressure(double t, Span n, const tl_saturation_options* o = nullptr) const {
        return mixture(tl_bubble_pressure, t, n, o);
    }
    BubbleDew dew_pressure(double t, Span n, const tl_saturation_options* o = nullptr) const {
        return mixture(tl_dew_pressure, t, n, o);
    }
    BubbleDew bubble_temperature(double p, Span n, const tl_saturation_options* o = nullptr) const {
        return mixture(tl_bubble_temperature, p, n, o);
    }
    BubbleDew dew_temperature(double p, Span n, const tl_saturation_options* o = nullptr) const {
        return mixture(tl_dew_temperature, p, n, o);
    }

    /// Properties of one phase of amounts n at (t, p) on the chosen root.
    tl_properties properties(double t, double p, Span n, Root root = Root::Stable,
                             std::vector<double>* ln_phi = nullptr) const {
        tl_properties out;
        if (ln_phi) ln_phi->assign(n.size(), 0.0);
        detail::check(tl_phase_properties(m_, t, p, n.data(), n.size(), static_cast<tl_root_choice>(root), &out,
                                          ln_phi ? ln_phi->data() : nullptr, ln_phi ? ln_phi->size() : 0));
        return out;
    }

private:
    explicit Model(const tl_model* m) noexcept : m_(m) {}
    static std::vector<const char*> pointers(const std::vector<std::string>& names) {
        std::vector<const char*> p;
        p.reserve(names.size());
        for (const auto& s : names) p.push_back(s.c_str());
        return p;
    }
    using MixtureFn = tl_status (*)(const tl_model*, double, const double*, size_t, const tl_saturation_options*,
                                    tl_bubble_dew_point*, double*, size_t);
    BubbleDew mixture(MixtureFn f, double spec, Span n, const tl_saturation_options* o) const {
        BubbleDew r;
        r.incipient.assign(num_components(), 0.0);
        detail::check(f(m_, spec, n.data(), n.size(), o, &r.point, r.incipient.data(), r.incipient.size()));
        return r;
    }
    const tl_model* m_;
};

/// A pure solid phase model (tl_solid). Move-only; the C handle is freed on destruction.
class Solid {
public:
    /// Ice Ih by IAPWS-06 (species "water").
    static Solid ice_ih() {
        const tl_solid* s = nullptr;
        detail::check(tl_solid_ice_ih_new(&s));
        return Solid(s);
    }
    /// Dry ice from fusion data, anchored to component i ("carbon dioxide") of a fluid model.
    static Solid carbon_dioxide(const Model& fluid, size_t i) {
        const tl_solid* s = nullptr;
        detail::check(tl_solid_carbon_dioxide_new(fluid.get(), i, &s));
        return Solid(s);
    }
    /// A solid of component i of a fluid model from user fusion data (species: that
    /// component); `source` says where the numbers come from.
    static Solid fusion(const Model& fluid, size_t i, const tl_fusion_data& data, const char* source = nullptr) {
        const tl_solid* s = nullptr;
        detail::check(tl_solid_fusion_new(fluid.get(), i, &data, source, &s));
        return Solid(s);
    }
    /// A second handle to the same solid.
    Solid clone() const {
        const tl_solid* s = nullptr;
        detail::check(tl_solid_clone(s_, &s));
        return Solid(s);
    }
    /// The species name (e.g. "water").
    std::string species() const {
        return detail::text([&](char* b, size_t l, size_t* n) { return tl_solid_species(s_, b, l, n); });
    }
    Solid(const Solid&) = delete;
    Solid& operator=(const Solid&) = delete;
    Solid(Solid&& o) noexcept : s_(o.s_) { o.s_ = nullptr; }
    Solid& operator=(Solid&& o) noexcept {
        std::swap(s_, o.s_);
        return *this;
    }
    ~Solid() { tl_solid_free(s_); }
    const tl_solid* get() const noexcept { return s_; }

private:
    explicit Solid(const tl_solid* s) noexcept : s_(s) {}
    const tl_solid* s_ = nullptr;
};

/// Gibbs-energy curves: g (J/mol) per phase (liquid, vapour, solids) on the grid, NaN where a
/// phase does not exist; and the crossings.
struct GibbsCurves {
    size_t points = 0;
    std::vector<double> gibbs;
    std::vector<tl_gibbs_crossing> crossings;
    /// g of phase row k (0 liquid, 1 vapour, 2 + j solid j) at grid point i.
    double g(size_t k, size_t i) const { return gibbs[k * points + i]; }
};

/// The outcome of a PT flash with solids: the summary, one entry per candidate solid, and the
/// fluid part in a Result.
struct SolidFlash {
    tl_solid_flash_summary summary;
    std::vector<tl_solid_phase> solids;
};

/// A pure substance: component `component` of a fluid model, taken pure, with solid phases
/// of the same species. Phases are TL_PURE_LIQUID, TL_PURE_VAPOR, TL_PURE_SOLID + k.
class PureSubstance {
public:
    PureSubstance(const Model& fluid, size_t component, std::vector<const Solid*> solids)
        : fluid_(fluid), component_(component) {
        for (const Solid* s : solids) s_.push_back(s ? s->get() : nullptr);
    }
    tl_pure_phase_point stable_phase(double t, double p) const {
        tl_pure_phase_point out;
        detail::check(tl_pure_stable_phase(fluid_.get(), component_, s_.data(), s_.size(), t, p, &out));
        return out;
    }
    /// Coexistence temperature (K) of phases a and b at p (Pa): melting, boiling, sublimation.
    tl_coexistence coexistence_temperature(tl_pure_phase a, tl_pure_phase b, double p,
                                           const double* t_guess = nullptr) const {
        tl_coexistence out;
        detail::check(tl_pure_coexistence_temperature(fluid_.get(), component_, s_.data(), s_.size(), a, b, p,
                                                      t_guess, &out));
        return out;
    }
    /// Coexistence pressure (Pa) of phases a and b at t (K).
    tl_coexistence coexistence_pressure(tl_pure_phase a, tl_pure_phase b, double t,
                                        const double* p_guess = nullptr) const {
        tl_coexistence out;
        detail::check(
            tl_pure_coexistence_pressure(fluid_.get(), component_, s_.data(), s_.size(), a, b, t, p_guess, &out));
        return out;
    }
    tl_triple_point triple_point(size_t solid = 0, const double* t_guess = nullptr) const {
        tl_triple_point out;
        detail::check(tl_pure_triple_point(fluid_.get(), component_, s_.data(), s_.size(), solid, t_guess, &out));
        return out;
    }
    /// g(T) of every phase at p (Pa) on the temperature grid ts (K, ascending).
    GibbsCurves gibbs_curves_isobaric(double p, Span ts) const { return curves(tl_pure_gibbs_curves_isobaric, p, ts); }
    /// g(p) of every phase at t (K) on the pressure grid ps (Pa, ascending).
    GibbsCurves gibbs_curves_isothermal(double t, Span ps) const {
        return curves(tl_pure_gibbs_curves_isothermal, t, ps);
    }
    /// The state of one phase at (t, p); std::nullopt where the phase does not exist.
    std::optional<tl_pure_phase_point> phase_state(tl_pure_phase phase, double t, double p) const {
        tl_pure_phase_point out;
        bool exists = false;
        detail::check(
            tl_pure_phase_state(fluid_.get(), component_, s_.data(), s_.size(), phase, t, p, &out, &exists));
        if (!exists) return std::nullopt;
        return out;
    }
    /// The boundary of phases a and b over a grid of temperatures (K, axis TL_TRACE_TEMPERATURE)
    /// or pressures (Pa, TL_TRACE_PRESSURE).
    std::vector<tl_coexistence> trace(tl_pure_phase a, tl_pure_phase b, tl_trace_axis axis, Span grid,
                                      const double* guess = nullptr) const {
        std::vector<tl_coexistence> out(grid.size());
        detail::check(tl_pure_trace(fluid_.get(), component_, s_.data(), s_.size(), a, b, axis, grid.data(),
                                    grid.size(), guess, out.data(), out.size()));
        return out;
    }

private:
    template <class F>
    GibbsCurves curves(F f, double fixed, Span grid) const {
        GibbsCurves r;
        r.points = grid.size();
        r.gibbs.assign((2 + s_.size()) * grid.size(), 0.0);
        size_t n = 0;
        detail::check(f(fluid_.get(), component_, s_.data(), s_.size(), fixed, grid.data(), grid.size(),
                        r.gibbs.data(), r.gibbs.size(), nullptr, 0, &n));
        r.crossings.resize(n);
        detail::check(f(fluid_.get(), component_, s_.data(), s_.size(), fixed, grid.data(), grid.size(),
                        r.gibbs.data(), r.gibbs.size(), r.crossings.data(), r.crossings.size(), &n));
        return r;
    }
    Model fluid_;
    size_t component_;
    std::vector<const tl_solid*> s_;
};

/// A flash or stability result. Reuse one Result across calls to avoid allocation.
class Result {
public:
    Result() { detail::check(tl_result_new(&r_)); }
    Result(const Result&) = delete;
    Result& operator=(const Result&) = delete;
    Result(Result&& o) noexcept : r_(o.r_) { o.r_ = nullptr; }
    Result& operator=(Result&& o) noexcept {
        std::swap(r_, o.r_);
        return *this;
    }
    ~Result() { tl_result_free(r_); }

    tl_result* get() noexcept { return r_; }
    const tl_result* get() const noexcept { return r_; }

    tl_result_kind kind() const {
        tl_result_kind k;
        detail::check(tl_result_kind_of(r_, &k));
        return k;
    }
    double temperature() const {
        double t = 0;
        detail::check(tl_result_conditions(r_, &t, nullptr));
        return t;
    }
    double pressure() const {
        double p = 0;
        detail::check(tl_result_conditions(r_, nullptr, &p));
        return p;
    }
    size_t num_phases() const {
        size_t n = 0;
        detail::check(tl_result_num_phases(r_, &n));
        return n;
    }
    size_t num_components() const {
        size_t n = 0;
        detail::check(tl_result_num_components(r_, &n));
        return n;
    }
    double vapor_fraction() const {
        double v = 0;
        detail::check(tl_result_vapor_fraction(r_, &v));
        return v;
    }
    tl_phase_info phase(size_t i) const {
        tl_phase_info p;
        detail::check(tl_result_phase(r_, i, &p));
        return p;
    }
    std::vector<double> composition(size_t i) const {
        std::vector<double> x(num_components());
        detail::check(tl_result_phase_composition(r_, i, x.data(), x.size()));
        return x;
    }
    /// Writes the mole fractions of phase i into out[0..len).
    void composition(size_t i, double* out, size_t len) const {
        detail::check(tl_result_phase_composition(r_, i, out, len));
    }
    std::vector<double> ln_phi(size_t i) const {
        std::vector<double> x(num_components());
        detail::check(tl_result_phase_ln_phi(r_, i, x.data(), x.size()));
        return x;
    }
    tl_properties phase_properties(const Model& m, size_t i) const {
        tl_properties p;
        detail::check(tl_result_phase_properties(r_, m.get(), i, &p));
        return p;
    }
    tl_mixture_properties mixture_properties(const Model& m) const {
        tl_mixture_properties p;
        detail::check(tl_result_mixture_properties(r_, m.get(), &p));
        return p;
    }
    tl_diagnostics diagnostics() const {
        tl_diagnostics d;
        detail::check(tl_result_diagnostics(r_, &d));
        return d;
    }
    tl_stability_summary stability() const {
        tl_stability_summary s;
        detail::check(tl_result_stability(r_, &s));
        return s;
    }
    /// Composition and tpd of stationary point i of a stability result.
    std::vector<double> stationary_point(size_t i, double* tpd = nullptr, bool* liquid_like = nullptr) const {
        std::vector<double> w(num_components());
        detail::check(tl_result_stationary_point(r_, i, tpd, liquid_like, w.data(), w.size()));
        return w;
    }
    std::string to_json() const {
        return detail::text([&](char* b, size_t l, size_t* n) { return tl_result_to_json(r_, b, l, n); });
    }

private:
    tl_result* r_ = nullptr;
};

/// A reusable flash solver for one model (warm starts, no allocation in steady state).
/// Use from one thread at a time; create one per thread.
class Context {
public:
    explicit Context(const Model& m) { detail::check(tl_context_new(m.get(), &c_)); }
    Context(const Context&) = delete;
    Context& operator=(const Context&) = delete;
    Context(Context&& o) noexcept : c_(o.c_) { o.c_ = nullptr; }
    Context& operator=(Context&& o) noexcept {
        std::swap(c_, o.c_);
        return *this;
    }
    ~Context() { tl_context_free(c_); }

    tl_context* get() noexcept { return c_; }

    /// PT flash into an existing result (reuses its storage).
    void flash(double t, double p, Span n, Result& out, const tl_flash_options* opts = nullptr) {
        detail::check(tl_context_flash(c_, t, p, n.data(), n.size(), opts, out.get()));
    }
    /// PT flash into a new result.
    Result flash(double t, double p, Span n, const tl_flash_options* opts = nullptr) {
        Result r;
        flash(t, p, n, r, opts);
        return r;
    }
    /// Forget the previous solution (next flash starts cold).
    void reset() { detail::check(tl_context_reset(c_)); }

private:
    tl_context* c_ = nullptr;
};

/// The result of a calculation by name (tl_record): named fields with SI units.
class Record {
public:
    Record() { detail::check(tl_record_new(&r_)); }
    ~Record() { tl_record_free(r_); }
    Record(const Record&) = delete;
    Record& operator=(const Record&) = delete;
    Record(Record&& o) noexcept : r_(std::exchange(o.r_, nullptr)) {}
    Record& operator=(Record&& o) noexcept {
        std::swap(r_, o.r_);
        return *this;
    }
    /// The calculation that filled it.
    std::string kind() const {
        return detail::text([&](char* b, size_t l, size_t* n) { return tl_record_kind(r_, b, l, n); });
    }
    /// The field names, in order.
    std::vector<std::string> fields() const {
        size_t n = 0;
        detail::check(tl_record_num_fields(r_, &n));
        std::vector<std::string> out;
        for (size_t i = 0; i < n; ++i)
            out.push_back(detail::text([&](char* b, size_t l, size_t* k) { return tl_record_field_name(r_, i, b, l, k); }));
        return out;
    }
    /// A number (throws for vectors, tables, and values absent from this result).
    double number(const std::string& name) const {
        double v = 0;
        detail::check(tl_record_number(r_, name.c_str(), &v));
        return v;
    }
    /// Numbers row by row, with the shape (rows, cols).
    std::vector<double> numbers(const std::string& name, size_t* rows = nullptr, size_t* cols = nullptr) const {
        size_t needed = 0;
        detail::check(tl_record_numbers(r_, name.c_str(), nullptr, 0, &needed, rows, cols));
        std::vector<double> v(needed);
        if (needed > 0) detail::check(tl_record_numbers(r_, name.c_str(), v.data(), v.size(), &needed, rows, cols));
        return v;
    }
    /// A word, or entry `index` of a vector of words.
    std::string text(const std::string& name, size_t index = 0) const {
        return detail::text([&](char* b, size_t l, size_t* n) { return tl_record_text(r_, name.c_str(), index, b, l, n); });
    }
    /// The SI unit of a field.
    std::string unit(const std::string& name) const {
        return detail::text([&](char* b, size_t l, size_t* n) { return tl_record_field_unit(r_, name.c_str(), b, l, n); });
    }
    /// The whole record as JSON.
    std::string json() const {
        return detail::text([&](char* b, size_t l, size_t* n) { return tl_record_to_json(r_, b, l, n); });
    }
    tl_record* get() const noexcept { return r_; }

private:
    tl_record* r_ = nullptr;
};

/// Warm-start state for calculations run one after another on one thread.
class Workspace {
public:
    Workspace() { detail::check(tl_workspace_new(&w_)); }
    ~Workspace() { tl_workspace_free(w_); }
    Workspace(const Workspace&) = delete;
    Workspace& operator=(const Workspace&) = delete;
    Workspace(Workspace&& o) noexcept : w_(std::exchange(o.w_, nullptr)) {}
    Workspace& operator=(Workspace&& o) noexcept {
        std::swap(w_, o.w_);
        return *this;
    }
    /// Forget previous solutions.
    void reset() { detail::check(tl_workspace_reset(w_)); }
    tl_workspace* get() const noexcept { return w_; }

private:
    tl_workspace* w_ = nullptr;
};

/// A calculation by name with its options (JSON object text; empty for the defaults),
/// checked once and run many times. Immutable; may be shared between threads.
class Plan {
public:
    explicit Plan(const std::string& name, const std::string& options_json = "") {
        detail::check(tl_plan_new(name.c_str(), options_json.empty() ? nullptr : options_json.c_str(), &p_));
    }
    ~Plan() { tl_plan_free(p_); }
    Plan(const Plan&) = delete;
    Plan& operator=(const Plan&) = delete;
    Plan(Plan&& o) noexcept : p_(std::exchange(o.p_, nullptr)) {}
    Plan& operator=(Plan&& o) noexcept {
        std::swap(p_, o.p_);
        return *this;
    }
    /// Runs on `model` with the scalar arguments (the calculation's order and units) and the
    /// feed (mol), warm-started from `ws` when given.
    Record run(const Model& model, Span args, Span feed, Workspace* ws = nullptr) const {
        Record r;
        run_into(r, model, args, feed, ws);
        return r;
    }
    /// As run(), refilling an existing record (no allocation of a new handle).
    void run_into(Record& r, const Model& model, Span args, Span feed, Workspace* ws = nullptr) const {
        detail::check(tl_run(p_, ws ? ws->get() : nullptr, model.get(), args.data(), args.size(), feed.data(),
                             feed.size(), r.get()));
    }

private:
    tl_plan* p_ = nullptr;
};

inline Result Model::flash(double t, double p, Span n, const tl_flash_options* opts) const {
    Result r;
    detail::check(tl_flash(m_, t, p, n.data(), n.size(), opts, r.get()));
    return r;
}

inline Result Model::stability(double t, double p, Span n, const tl_stability_options* opts) const {
    Result r;
    detail::check(tl_stability(m_, t, p, n.data(), n.size(), opts, r.get()));
    return r;
}

/// PT flash of amounts n at (t, p) over the fluid phases of `fluid` and the given solids; the
/// fluid part goes into `fluid_part` (emptied when everything froze).
/// The frost point (K) of the pure solid `solid` from a fluid of amounts n of `fluid` at p (Pa),
/// searched from t_guess (K).
inline double frost_point_temperature(const Model& fluid, const Solid& solid, double p, Span n, double t_guess,
                                      const tl_flash_options* opts = nullptr) {
    double t = 0;
    detail::check(tl_frost_point_temperature(fluid.get(), solid.get(), p, n.data(), n.size(), t_guess, opts, &t));
    return t;
}

inline SolidFlash flash_with_solids(const Model& fluid, const std::vector<const Solid*>& solids, double t, double p,
                                    Span n, Result& fluid_part, const tl_flash_options* opts = nullptr) {
    std::vector<const tl_solid*> s;
    for (const Solid* x : solids) s.push_back(x ? x->get() : nullptr);
    SolidFlash r;
    r.solids.resize(s.size());
    detail::check(tl_flash_with_solids(fluid.get(), s.data(), s.size(), t, p, n.data(), n.size(), opts,
                                       fluid_part.get(), &r.summary, r.solids.data(), r.solids.size()));
    return r;
}

} // namespace tieline

#endif // TIELINE_HPP
