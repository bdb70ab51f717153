//! ISR convolution speed. Targets (issue 4): one point (μμ, KF O(β²), x_max = 0.5,
//! 1e-8) ≤ 1 µs without VP, ≤ 3 µs with full VP through its tabulation.

use criterion::{Criterion, criterion_group, criterion_main};
use radnorm::isr::{Cuts, Isr, Scheme};
use radnorm::process::FermionPair;
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

criterion_group!(benches, isr);
criterion_main!(benches);
