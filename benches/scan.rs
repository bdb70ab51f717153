//! Scan correction speed. Target (issue 6): a 30-point scan unfolding with its full budget
//! ≤ 0.5 s (whole process; here the library part: card → corrected scan with budget).

use criterion::{Criterion, criterion_group, criterion_main};
use radnorm::scan::generate::{PlannedPoint, generate_scan};
use radnorm::scan::{correct_scan, parse_scan_card};

/// An invented 30-point scan across a 40 MeV wide resonance on an R = 3.7 continuum, with
/// full VP, two alternative radiators, beam-energy and spread terms (luminosity given per
/// point, so the luminosity layer is not part of this figure).
const CARD: &str = r#"
[process]
final_state = "hadrons"
r_ratio = 3.7
[radiation]
radiator = "kf2"
min_mass_gev = 3.9
compare = ["exp1", "sfll"]
[vp]
model = "full"
[beam]
energy_unc_mev = 0.5
energy_spread_unc_rel = 0.1
[luminosity]
scale_unc_rel = 0.01
[efficiency]
unc_rel = 0.005
[[resonance]]
name = "Y"
mass_gev = 5.2
width_gev = 0.04
"#;

fn scan(c: &mut Criterion) {
    let plan = parse_scan_card(CARD, "bench.toml").unwrap();
    let points: Vec<PlannedPoint> = (0..30)
        .map(|i| PlannedPoint {
            sqrt_s_gev: 5.0 + 0.0137 * i as f64,
            luminosity_nb_inv: 2000.0,
            efficiency: 0.7,
            n_bkg: 150.0,
            energy_spread_mev: 2.0,
        })
        .collect();
    // The card's own continuum as the truth: the unfolding's work does not depend on it.
    let data = generate_scan(&plan.chain, &*plan.continuum, &points, 7);
    let mut group = c.benchmark_group("scan");
    group.sample_size(10);
    group.bench_function(
        "30-point unfolding with full budget, full VP (target <= 0.5 s)",
        |b| b.iter(|| correct_scan(&plan, &data).unwrap().iterations),
    );
    group.bench_function("scan card with full VP and its 5 region variations", |b| {
        b.iter(|| {
            parse_scan_card(CARD, "bench.toml")
                .unwrap()
                .resonances
                .len()
        })
    });
    group.finish();
}

criterion_group!(benches, scan);
criterion_main!(benches);
