//! Vacuum-polarisation speed. Targets (issue 3): leptonic Δα ≤ 100 ns; Δα_had query after
//! tabulation ≤ 0.5 µs; building the tabulation ≤ 50 ms; a direct dispersion integral ≤ 1 ms.
//! Issue 4: the s-channel factor 1/(1 − Π) from its table ≤ 25 ns (the floor under every
//! dressed σ), its table built in ≤ 5 ms (once per model, budget variations included).

use criterion::{Criterion, criterion_group, criterion_main};
use radnorm::rmodel::RModel;
use radnorm::vp::hadronic::{HadronicVp, smooth_re_direct};
use radnorm::vp::leptonic::pi_leptonic;
use radnorm::vp::{Polarisation, Vp};
use std::hint::black_box;
use std::sync::Arc;

fn vp(c: &mut Criterion) {
    c.bench_function("leptonic Pi at M_Z^2 (target <= 100 ns)", |b| {
        b.iter(|| pi_leptonic(black_box(8315.18)))
    });
    let model = RModel::standard();
    let h = HadronicVp::new(model.clone());
    let points: Vec<f64> = (0..64)
        .map(|k| {
            let x = -5.0 + 9.0 * ((k as f64 * 0.618_034) % 1.0);
            if k % 2 == 0 {
                10f64.powf(x)
            } else {
                -(10f64.powf(x))
            }
        })
        .collect();
    c.bench_function(
        "hadronic Pi query, 64 mixed points (target <= 0.5 us each)",
        |b| b.iter(|| points.iter().map(|&q| h.pi(black_box(q)).re).sum::<f64>()),
    );
    let full = Vp::full();
    full.tabulate();
    let timelike: Vec<f64> = points.iter().map(|q| q.abs()).collect();
    c.bench_function(
        "s-channel factor 1/(1 - Pi) from the table, full VP, 64 timelike points (target <= 25 ns each)",
        |b| {
            b.iter(|| {
                timelike
                    .iter()
                    .map(|&s| full.s_channel_factor(black_box(s)).re)
                    .sum::<f64>()
            })
        },
    );
    c.bench_function(
        "s-channel factor 1/(1 - Pi) direct, full VP, 64 timelike points (for comparison)",
        |b| {
            b.iter(|| {
                timelike
                    .iter()
                    .map(|&s| (1.0 / (1.0 - full.pi(black_box(s)))).re)
                    .sum::<f64>()
            })
        },
    );
    let mut g = c.benchmark_group("slow");
    g.sample_size(10);
    let shared = Arc::new(h.clone());
    g.bench_function(
        "build s-channel factor table, full VP (target <= 5 ms)",
        |b| b.iter(|| Vp::with_hadronic(black_box(shared.clone())).tabulate()),
    );
    g.bench_function("build hadronic tabulation (target <= 50 ms)", |b| {
        b.iter(|| HadronicVp::new(black_box(model.clone())))
    });
    g.bench_function(
        "direct dispersion integral, timelike 10 GeV^2 (target <= 1 ms)",
        |b| b.iter(|| smooth_re_direct(&model, black_box(10.0))),
    );
    g.bench_function(
        "direct dispersion integral, spacelike -10 GeV^2 (target <= 1 ms)",
        |b| b.iter(|| smooth_re_direct(&model, black_box(-10.0))),
    );
    g.finish();
}

criterion_group!(benches, vp);
criterion_main!(benches);
