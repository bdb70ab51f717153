//! Luminosity speed. Targets (issue "Luminosity"): large-angle Bhabha σ_vis with ISR/FSR and
//! full VP at 1e-4: ≤ 50 ms calorimetric, ≤ 1 s bare tracks; a 100-run luminosity table,
//! whole process (σ_vis and its budget once per distinct energy), ≤ 1 s.

use criterion::{Criterion, criterion_group, criterion_main};
use radnorm::lumi::{
    Acceptance, Channel, FinalState, LumiPlan, Monitor, PolarRange, RawCard, Settings, Visible,
    luminosities, parse_counts,
};
use radnorm::vp::{Polarisation, Vp};
use std::hint::black_box;
use std::process::Command;

/// The monitor card of the demo scenario (large-angle Bhabha, calorimetric, full VP).
const CARD: &str = include_str!("../tables/demo/lumi.toml");

/// 100 runs at one energy (the counts-file columns of `radnorm lumi --data`).
fn counts_100() -> String {
    let mut text = String::from("run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency\n");
    for i in 0..100 {
        let n = 95_000 + 137 * i;
        text.push_str(&format!("r{i:03},5.2,{n},{},0.91\n", n / 200));
    }
    text
}

fn sigma_vis(c: &mut Criterion) {
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
        // A new calculator per iteration: its acceptance structure is searched each time,
        // as it is for every new acceptance.
        g.bench_function(name, |b| {
            b.iter(|| {
                Visible::new(Channel::Bhabha, a, vp, Settings::default())
                    .unwrap()
                    .sigma_vis(black_box(10.58f64.powi(2)))
                    .unwrap()
            })
        });
    }
    g.finish();
}

fn table(c: &mut Criterion) {
    let mut g = c.benchmark_group("lumi");
    g.sample_size(10);
    let plan = LumiPlan::try_from(RawCard::parse(CARD).unwrap()).unwrap();
    let counts = counts_100();
    // The library path of `radnorm lumi --card --data`: VP tables (nominal and one per
    // R-model region), counts, σ_vis and budget at the distinct energy, the luminosities.
    g.bench_function("100-run luminosity table, library (target <= 1 s)", |b| {
        b.iter(|| {
            let monitor = Monitor::new(plan.clone()).unwrap();
            let runs = parse_counts("counts.csv", black_box(&counts)).unwrap();
            let prediction = monitor.predict(runs[0].sqrt_s_gev).unwrap();
            let per_run = vec![&prediction; runs.len()];
            luminosities(&runs, &per_run, plan.uncertainty.efficiency_rel).unwrap()
        })
    });
    // The whole process, as a user runs it.
    let dir = std::env::temp_dir().join(format!("radnorm-bench-lumi-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let (card, data) = (dir.join("lumi.toml"), dir.join("counts.csv"));
    std::fs::write(&card, CARD).unwrap();
    std::fs::write(&data, &counts).unwrap();
    g.bench_function(
        "100-run luminosity table, whole process radnorm lumi --data (target <= 1 s)",
        |b| {
            b.iter(|| {
                let out = Command::new(env!("CARGO_BIN_EXE_radnorm"))
                    .args(["lumi", "--card"])
                    .arg(&card)
                    .arg("--data")
                    .arg(&data)
                    .output()
                    .unwrap();
                assert!(
                    out.status.success(),
                    "{}",
                    String::from_utf8_lossy(&out.stderr)
                );
                out.stdout.len()
            })
        },
    );
    g.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, sigma_vis, table);
criterion_main!(benches);
