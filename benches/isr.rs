//! ISR convolution speed. Targets (issue 4): one point (μμ, KF O(β²), x_max = 0.5,
//! 1e-8) ≤ 1 µs without VP, ≤ 3 µs with full VP through its tabulation, also where a
//! narrow resonance of the hadronic VP lies inside the integration range; a 10⁴-point
//! grid (√s 2–12 GeV, full VP, open range) in ≤ 30 ms for the whole `radnorm isr` process,
//! of which the integrals are measured here (the process adds start-up and output).

use criterion::{Criterion, criterion_group, criterion_main};
use radnorm::isr::{Cuts, Isr, Scheme};
use radnorm::process::{CrossSection, FermionPair};
use radnorm::vp::{Dressed, Vp};
use std::hint::black_box;

fn isr(c: &mut Criterion) {
    let mumu = FermionPair::muon();
    let half = Isr::new(Scheme::KuraevFadin2, Cuts::NONE.with_x_max(0.5).unwrap());
    c.bench_function(
        "isr mumu kf2 x_max=0.5 sqrt_s=10, no VP (target <= 1 us)",
        |b| b.iter(|| half.observe(&mumu, black_box(100.0)).unwrap().sigma_nb),
    );
    let open = Isr::new(Scheme::KuraevFadin2, Cuts::NONE);
    c.bench_function("isr mumu kf2 open to threshold sqrt_s=10, no VP", |b| {
        b.iter(|| open.observe(&mumu, black_box(100.0)).unwrap().sigma_nb)
    });
}

fn isr_vp(c: &mut Criterion) {
    let half = Isr::new(Scheme::KuraevFadin2, Cuts::NONE.with_x_max(0.5).unwrap());
    for (name, vp) in [("leptonic", Vp::leptonic()), ("full", Vp::full())] {
        let dressed = Dressed::new(FermionPair::muon(), vp);
        c.bench_function(
            &format!(
                "isr mumu kf2 x_max=0.5 sqrt_s=10, {name} VP (target <= 3 us; full: the Upsilon(1S) in range)"
            ),
            |b| b.iter(|| half.observe(&dressed, black_box(100.0)).unwrap().sigma_nb),
        );
    }
    // Narrow resonances of the hadronic VP inside s′ ∈ [s/2, s]: the dressed line shape
    // peaks at the pole of 1/(1 − Π) (J/ψ: 24 widths above the bare M²), which the fixed path must
    // split at and map (3 panels with one such peak, 10 with the three Υ and the open-bottom
    // edge). The target is for a point with one narrow resonance in range; each further one
    // adds its two graded panels (the three Υ: ~3.5 times a one-peak point).
    let dressed = Dressed::new(FermionPair::muon(), Vp::full());
    for (sqrt_s, inside) in [
        (10.58, "Upsilon(1S-3S), three narrow peaks: no target"),
        (3.2, "J/psi (target <= 3 us)"),
    ] {
        c.bench_function(
            &format!("isr mumu kf2 x_max=0.5 sqrt_s={sqrt_s}, full VP, {inside} in range"),
            |b| {
                b.iter(|| {
                    half.observe(&dressed, black_box(sqrt_s * sqrt_s))
                        .unwrap()
                        .sigma_nb
                })
            },
        );
    }
    // No structure of σ_d in s′ ∈ [s/2, s] (√s′ from 4.9 to 7 GeV lies between the
    // open-charm edges and the Υ): the smooth case the targets' floor refers to.
    c.bench_function(
        "isr mumu kf2 x_max=0.5 sqrt_s=7, full VP, nothing narrow in range (target <= 3 us)",
        |b| b.iter(|| half.observe(&dressed, black_box(49.0)).unwrap().sigma_nb),
    );
    // The floor under every VP point: one evaluation of the dressed σ_d (a fixed panel
    // takes 17 to 49 of them, a Gauss–Kronrod pair's nodes).
    c.bench_function("dressed mumu sigma_d, full VP, one evaluation", |b| {
        b.iter(|| dressed.sigma_nb(black_box(100.0)))
    });
}

fn isr_grid(c: &mut Criterion) {
    let dressed = Dressed::new(FermionPair::muon(), Vp::full());
    let open = Isr::new(Scheme::KuraevFadin2, Cuts::NONE);
    let s: Vec<f64> = (0..10_000)
        .map(|i| (2.0 + 10.0 * i as f64 / 9999.0).powi(2))
        .collect();
    let mut group = c.benchmark_group("isr grid");
    group.sample_size(20);
    group.bench_function(
        "observe_many, 10^4 points sqrt_s 2-12 GeV, mumu full VP, open range",
        |b| b.iter(|| open.observe_many(&dressed, black_box(&s)).len()),
    );
    group.bench_function("observe point by point, the same grid, one thread", |b| {
        b.iter(|| {
            black_box(&s)
                .iter()
                .map(|&s| open.observe(&dressed, s).unwrap().sigma_nb)
                .sum::<f64>()
        })
    });
    group.finish();
}

criterion_group!(benches, isr, isr_vp, isr_grid);
criterion_main!(benches);
