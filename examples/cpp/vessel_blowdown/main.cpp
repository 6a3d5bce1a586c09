// vessel_blowdown — a small time-stepping simulator on tieline's C++ wrapper.
//
// The scenario is invented for this example (no real equipment or plant): a 2 m3 adiabatic
// vessel holds a made-up natural-gas-like mixture (methane 0.80, ethane 0.10, propane 0.06,
// n-butane 0.04) at 290 K and 80 bar, and vents vapour through a 15 mm orifice (discharge
// coefficient 0.8) to 1 bar, with a little heat from the vessel wall (UA = 150 W/K, wall at
// 290 K). Each time step removes the vented amount and its enthalpy, then finds the (T, p)
// at which the remaining contents fill the vessel volume with the remaining internal energy
// (a UV flash, by Newton on T and ln p over PT flashes). Every PT flash goes through one
// tieline::Context, so each warm-starts from the one before and allocates nothing.
//
// The flow model is the textbook ideal-gas orifice equation with the real-gas cp/cv, density
// and molar mass of the vapour phase; it is an illustration, not a design method.
#include "tieline.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <vector>

namespace {

constexpr double R = 8.314462618;   // J/(mol K)
constexpr double kVolume = 2.0;     // m3
constexpr double kOrifice = 0.015;  // m
constexpr double kCd = 0.8;
constexpr double kBack = 1.0e5;     // Pa
constexpr double kUA = 150.0;       // W/K
constexpr double kTWall = 290.0;    // K

struct State {
    double T, p;  // K, Pa
};

// Vented molar flow (mol/s) of the lightest phase of `r` (ideal-gas orifice equation).
double vent_rate(const tieline::Model& m, const tieline::Result& r, double p) {
    tl_properties v = r.phase_properties(m, 0);
    double g = v.cp / v.cv;
    double rs = R / v.molar_mass;  // J/(kg K)
    double area = M_PI * kOrifice * kOrifice / 4.0;
    double crit = std::pow(2.0 / (g + 1.0), g / (g - 1.0));
    double flux;  // kg/(m2 s)
    if (kBack / p <= crit) {
        flux = p * std::sqrt(g / (rs * v.temperature) * std::pow(2.0 / (g + 1.0), (g + 1.0) / (g - 1.0)));
    } else {
        double x = kBack / p;
        flux = p * std::sqrt(2.0 * g / ((g - 1.0) * rs * v.temperature) *
                             std::max(0.0, std::pow(x, 2.0 / g) - std::pow(x, (g + 1.0) / g)));
    }
    return kCd * area * flux / v.molar_mass;
}

}  // namespace

int main() {
    using namespace tieline;
    const Model model = Model::from_names({"methane", "ethane", "propane", "n-butane"}, CubicKind::PengRobinson);
    Context ctx(model);
    Result r;  // reused by every flash

    std::vector<double> n = {0.80, 0.10, 0.06, 0.04};
    State s{290.0, 80.0e5};
    // Scale the amounts so that the contents fill the vessel at the initial state.
    ctx.flash(s.T, s.p, n, r);
    double vm = r.mixture_properties(model).molar_volume;
    for (double& x : n) x *= kVolume / vm;
    ctx.flash(s.T, s.p, n, r);
    double U = r.mixture_properties(model).internal_energy * (kVolume / vm);

    // Residuals of the UV specification at (T, p): volume and internal energy mismatch.
    long flashes = 0, warm = 0;
    auto residual = [&](const State& st, double ntot, double u_target, double f[2]) {
        ctx.flash(st.T, st.p, n, r);
        ++flashes;
        warm += r.diagnostics().warm_start;
        tl_mixture_properties mp = r.mixture_properties(model);
        f[0] = ntot * mp.molar_volume / kVolume - 1.0;
        f[1] = (ntot * mp.internal_energy - u_target) / (ntot * R * 300.0);
    };

    const double dt = 1.0;  // s
    std::printf("Vessel blowdown (invented scenario: 2 m3, C1/C2/C3/nC4 gas, 80 bar, 290 K, 15 mm vent)\n");
    std::printf("%6s %9s %8s %10s %7s %9s %10s %7s\n", "t [s]", "p [bar]", "T [K]", "phases", "beta_V", "m [kg]",
                "vent[kg/s]", "UV its");
    double t = 0.0;
    int newton_total = 0;
    for (int step = 0; step <= 300; ++step) {
        double ntot = 0, mass = 0;
        for (size_t i = 0; i < n.size(); ++i) {
            ntot += n[i];
            mass += n[i] * model.molar_mass(i);
        }
        ctx.flash(s.T, s.p, n, r);
        ++flashes;
        double rate = vent_rate(model, r, s.p);  // mol/s of the lightest phase
        std::vector<double> y = r.composition(0);
        tl_properties vap = r.phase_properties(model, 0);
        if (step % 20 == 0)
            std::printf("%6.0f %9.3f %8.2f %10s %7.4f %9.2f %10.4f %7d\n", t, s.p / 1e5, s.T,
                        r.num_phases() == 2 ? "V+L" : "V", r.vapor_fraction(), mass, rate * vap.molar_mass,
                        newton_total);
        if (s.p < 2.0e5) break;

        // Vent for dt: remove dn of the vapour and its enthalpy; add the wall heat.
        double dn = std::min(rate * dt, 0.05 * ntot);
        for (size_t i = 0; i < n.size(); ++i) n[i] = std::max(0.0, n[i] - dn * y[i]);
        U += -dn * vap.enthalpy + kUA * (kTWall - s.T) * dt;
        ntot -= dn;

        // UV flash: Newton on (T, ln p) with finite-difference Jacobian, damped steps.
        int it = 0;
        for (; it < 40; ++it) {
            double f[2], ft[2], fp[2];
            residual(s, ntot, U, f);
            if (std::fabs(f[0]) < 1e-10 && std::fabs(f[1]) < 1e-10) break;
            const double hT = 1e-4, hp = 1e-7;
            residual({s.T + hT, s.p}, ntot, U, ft);
            residual({s.T, s.p * std::exp(hp)}, ntot, U, fp);
            double a = (ft[0] - f[0]) / hT, b = (fp[0] - f[0]) / hp;
            double c = (ft[1] - f[1]) / hT, d = (fp[1] - f[1]) / hp;
            double det = a * d - b * c;
            double dT = -(d * f[0] - b * f[1]) / det;
            double dlp = -(-c * f[0] + a * f[1]) / det;
            double scale = std::min({1.0, 5.0 / std::fabs(dT), 0.2 / std::fabs(dlp)});
            s.T += scale * dT;
            s.p *= std::exp(scale * dlp);
        }
        if (it == 40) {
            std::fprintf(stderr, "UV flash did not converge at t = %g s\n", t);
            return 1;
        }
        newton_total += it;
        t += dt;
    }
    std::printf("%ld PT flashes through one context, %ld warm-started (%.0f %%)\n", flashes, warm,
                100.0 * double(warm) / double(flashes));
    return 0;
}
