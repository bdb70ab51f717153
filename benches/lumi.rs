//! Visible Bhabha cross-section speed. Targets (issue "Luminosity"): large-angle σ_vis with
//! ISR/FSR and VP at 1e-4: ≤ 50 ms calorimetric, ≤ 1 s bare tracks.

use criterion::{Criterion, criterion_group, criterion_main};
use radnorm::lumi::{Acceptance, Channel, FinalState, PolarRange, Settings, Visible};
use radnorm::vp::{Polarisation, Vp};
use std::hint::black_box;

fn lumi(c: &mut Criterion) {
    let w = PolarRange::new(40.0, 140.0).unwrap();
    let vp = Vp::full();
    let mut g = c.benchmark_group("lumi");
    g.sample_size(10);
    for (name, fs, vp) in [
        (
            "bhabha sigma_vis calorimetric, no VP",
            FinalState::Calorimetric,
            None,
        ),
        (
            "bhabha sigma_vis calorimetric + full VP (target <= 50 ms)",
            FinalState::Calorimetric,
            Some(&vp as &dyn Polarisation),
        ),
        (
            "bhabha sigma_vis bare tracks + full VP (target <= 1 s)",
            FinalState::BareTrack,
            Some(&vp as &dyn Polarisation),
        ),
    ] {
        let a = Acceptance::new(w, w, 10.0, 0.5, fs).unwrap();
        let v = Visible::new(Channel::Bhabha, a, vp, Settings::default()).unwrap();
        g.bench_function(name, |b| {
            b.iter(|| v.sigma_vis(black_box(10.58f64.powi(2))).unwrap())
        });
    }
    g.finish();
}

criterion_group!(benches, lumi);
criterion_main!(benches);
