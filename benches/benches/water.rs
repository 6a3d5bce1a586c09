//! Water benchmarks: IAPWS-95 properties at (T, ρ) and at (T, p), saturation at T (Akasaka),
//! a melting-curve point (IAPWS-95 liquid + IAPWS-06 ice), and a flash with a freezing solid.

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use tieline::equilibrium::{PurePhase, PurePhases, SolidFlashOptions, SolidPhaseSpec, flash_pt_with_solids};
use tieline::model::iapws95::residual_part;
use tieline::model::solid::{IceIh, SolidModel};
use tieline::model::{CubicEos, CubicKind, Iapws95, RootChoice};
use tieline::substance::DataBank;

fn benches(c: &mut Criterion) {
    let w = Iapws95::new();
    let ice = IceIh::new();
    let set = PurePhases::new(&w, 0, vec![&ice as &dyn SolidModel]).unwrap();
    let mut g = c.benchmark_group("water");
    g.bench_function("phir_derivatives", |b| {
        b.iter(|| residual_part(black_box(2.6025621), black_box(1.294192)))
    });
    g.bench_function("iapws95_state_td_liquid", |b| {
        b.iter(|| w.state_td(black_box(500.0), black_box(838.025)).unwrap())
    });
    g.bench_function("iapws95_state_tp_liquid", |b| {
        b.iter(|| {
            w.state_tp(black_box(300.0), black_box(1e5), RootChoice::Stable)
                .unwrap()
        })
    });
    g.bench_function("iapws95_state_tp_vapour", |b| {
        b.iter(|| {
            w.state_tp(black_box(500.0), black_box(1e5), RootChoice::Stable)
                .unwrap()
        })
    });
    g.bench_function("iapws95_saturation_450K", |b| {
        b.iter(|| w.saturation_at_temperature(black_box(450.0)).unwrap())
    });
    g.bench_function("iapws95_saturation_at_101325Pa", |b| {
        b.iter(|| w.saturation_at_pressure(black_box(101325.0)).unwrap())
    });
    g.bench_function("iapws06_gibbs", |b| {
        b.iter(|| ice.gibbs(black_box(260.0), black_box(1e5)).unwrap())
    });
    g.bench_function("melting_point_at_10MPa", |b| {
        b.iter(|| {
            set.coexistence_at_pressure(PurePhase::Solid(0), PurePhase::Liquid, black_box(10e6), Some(273.0))
                .unwrap()
        })
    });
    let mix = CubicEos::new(
        CubicKind::PengRobinson,
        DataBank::embedded().get_many(&["nitrogen", "water"]).unwrap(),
    )
    .unwrap();
    let spec = SolidPhaseSpec::matching(&mix, &ice).unwrap();
    let opts = SolidFlashOptions::default();
    g.bench_function("pr_flash_with_ice_225K", |b| {
        b.iter(|| flash_pt_with_solids(&mix, &[spec], black_box(225.0), 1e5, &[0.999, 0.001], &opts).unwrap())
    });
    g.finish();
}

criterion_group!(water, benches);
criterion_main!(water);
