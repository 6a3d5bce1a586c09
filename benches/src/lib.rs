//! Benchmark fixtures of tieline: the 10-component Peng–Robinson natural-gas mixture used by
//! every benchmark, and its operating points (an invented composition, for benchmarking only).

pub mod counting;
pub mod reference_flash;

use tieline::model::{CubicEos, CubicKind};
use tieline::substance::DataBank;

/// Component names of the benchmark mixture.
pub const NAMES: [&str; 10] = [
    "nitrogen",
    "carbon dioxide",
    "methane",
    "ethane",
    "propane",
    "isobutane",
    "n-butane",
    "n-pentane",
    "n-hexane",
    "n-octane",
];

/// Feed mole fractions of the benchmark mixture (invented rich gas).
pub const FEED: [f64; 10] = [0.01, 0.02, 0.70, 0.09, 0.06, 0.02, 0.03, 0.025, 0.02, 0.025];

/// A two-phase point of the benchmark mixture: (T (K), p (Pa)).
pub const TWO_PHASE: (f64, f64) = (280.0, 50e5);

/// A single-phase (vapour) point of the benchmark mixture: (T (K), p (Pa)).
pub const ONE_PHASE: (f64, f64) = (420.0, 50e5);

/// The benchmark model: Peng–Robinson with N2/CO2/C1 interaction parameters of typical size
/// (common practice, no source).
pub fn model() -> CubicEos {
    let comps = DataBank::embedded()
        .get_many(&NAMES)
        .expect("benchmark components are in the bank");
    CubicEos::new(CubicKind::PengRobinson, comps)
        .and_then(|m| m.with_pair(0, 1, -0.017, 0.0))
        .and_then(|m| m.with_pair(0, 2, 0.031, 0.0))
        .and_then(|m| m.with_pair(1, 2, 0.12, 0.0))
        .and_then(|m| m.with_pair(1, 3, 0.13, 0.0))
        .expect("benchmark model is valid")
}

/// Flash options of the hot-loop benchmarks: the defaults without the certificate.
pub fn no_certificate() -> tieline::equilibrium::FlashOptions {
    tieline::equilibrium::FlashOptions {
        certificate: false,
        ..Default::default()
    }
}

/// The equilibrium liquid of the benchmark mixture at [`TWO_PHASE`] (mole fractions), the
/// phase whose stability the certificate benchmark tests.
pub fn equilibrium_liquid(m: &CubicEos) -> Vec<f64> {
    let (t, p) = TWO_PHASE;
    let r = tieline::equilibrium::flash_pt(m, t, p, &FEED, &no_certificate()).expect("the benchmark point flashes");
    r.phases[1].composition.clone()
}

/// Median time of one call of `f`, ns: 31 samples of `reps` calls each, on a plain clock (the
/// ratios the benches print are medians of this in the same run).
pub fn median_ns(f: &mut dyn FnMut(), reps: usize) -> f64 {
    let mut samples = Vec::with_capacity(31);
    for _ in 0..31 {
        let t0 = std::time::Instant::now();
        for _ in 0..reps {
            f();
        }
        samples.push(t0.elapsed().as_nanos() as f64 / reps as f64);
    }
    samples.sort_by(|a, b| a.total_cmp(b));
    samples[15]
}
