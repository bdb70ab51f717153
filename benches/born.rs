//! Born cross-section speed. Targets (issue "Core"): a Born σ ≤ 50 ns; Bhabha in an
//! acceptance (closed form) ≤ 200 ns.

use criterion::{Criterion, criterion_group, criterion_main};
use radnorm::process::{Bhabha, CosRange, CrossSection, FermionPair, WidthScheme, ZExchange};
use std::hint::black_box;

fn born(c: &mut Criterion) {
    let mumu = FermionPair::muon();
    c.bench_function("born mumu sigma (target <= 50 ns)", |b| {
        b.iter(|| mumu.sigma_nb(black_box(110.25)))
    });
    let mumu_z = FermionPair::muon().with_z(ZExchange::standard(WidthScheme::Running));
    c.bench_function("born mumu+Z sigma (target <= 50 ns)", |b| {
        b.iter(|| mumu_z.sigma_nb(black_box(8315.0)))
    });
    let bhabha = Bhabha::new(CosRange::both_inside_deg(40.0, 140.0).unwrap());
    c.bench_function(
        "born bhabha in acceptance, closed form (target <= 200 ns)",
        |b| b.iter(|| bhabha.sigma_nb(black_box(112.0))),
    );
}

criterion_group!(benches, born);
criterion_main!(benches);
