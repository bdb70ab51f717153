//! Correction-table speed. Target (issue 6): a 10⁴-point table with 5 variations ≤ 1 s
//! on 2 cores (rayon over the rows; the VP variation tables are built with the plan).

use criterion::{Criterion, criterion_group, criterion_main};
use radnorm::table::parse_table_card;

/// μμ from 2 to 12 GeV with x ≤ 0.5 and full VP: two radiator, two VP-region and one
/// beam-energy variation.
const CARD: &str = r#"
[grid]
sqrt_s_gev = "2.0:12.0:10000"
processes = ["mumu"]
[[cut]]
name = "x50"
x_max = 0.5
[[variation]]
name = "radiator_exp1"
radiator = "exp1"
[[variation]]
name = "radiator_sfll"
radiator = "sfll"
[[variation]]
name = "vp_inclusive"
vp_region = "inclusive_1_2_gev"
[[variation]]
name = "vp_pqcd"
vp_region = "pqcd"
[[variation]]
name = "beam_energy"
sqrt_s_shift_mev = 1.0
"#;

fn table(c: &mut Criterion) {
    let mut group = c.benchmark_group("table");
    group.sample_size(10);
    group.bench_function(
        "10^4 rows x 5 variations, plan and rows (target <= 1 s on 2 cores)",
        |b| {
            b.iter(|| {
                let plan = parse_table_card(CARD, "bench.toml").unwrap();
                plan.compute(0..plan.len(), &|| {}).unwrap().len()
            })
        },
    );
    group.finish();
}

criterion_group!(benches, table);
criterion_main!(benches);
