//! Running α and the VP choice the later layers (ISR, luminosity, scans) take.
//!
//! α(q²) = α/(1 − Π(q²)); the s-channel factor is the complex 1/(1 − Π(s + i0)), the
//! t-channel one the real 1/(1 − Π(t)). The s-channel factor is tabulated once per model
//! ([`super::factor`]): a dressed cross-section evaluates it at every point of every
//! integral, and the direct Π costs ~150 ns there (leptonic logarithms, the R model, seven
//! Breit–Wigners), the table ~8 ns.

use super::Polarisation;
use super::factor::FactorTable;
use super::hadronic::HadronicVp;
use super::leptonic::{LEPTON_MASSES_GEV, pi_leptonic};
use crate::constants::ALPHA;
use crate::numeric::fast::{Fused, Rounding, Separate};
use crate::process::Feature;
use crate::rmodel::{RModel, Region};
use num_complex::Complex64;
use std::sync::{Arc, OnceLock};

/// Which vacuum polarisation to include.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum VpChoice {
    /// Π = 0 (bare).
    None,
    /// Leptons only (e, μ, τ; one loop exact plus two and three loops).
    Leptonic,
    /// Leptons and hadrons (the default R model, or a given one).
    Full,
}

impl VpChoice {
    /// The choice named by its [`Self::key`] (`none`, `leptonic`, `full`); `lep`, as on the
    /// command line, also names the leptonic one.
    pub fn from_key(key: &str) -> Option<Self> {
        if key == "lep" {
            return Some(VpChoice::Leptonic);
        }
        [VpChoice::None, VpChoice::Leptonic, VpChoice::Full]
            .into_iter()
            .find(|c| c.key() == key)
    }

    /// The key used on the command line and in outputs.
    pub fn key(self) -> &'static str {
        match self {
            VpChoice::None => "none",
            VpChoice::Leptonic => "leptonic",
            VpChoice::Full => "full",
        }
    }
}

/// The tabulated hadronic Π of the default R model, built once per process and shared.
///
/// The table is built outside the lock: building uses rayon, and a rayon worker blocked
/// on a lock whose holder waits for rayon work deadlocks (seen with the region variations
/// built in parallel). Two threads may race to build it; the first result is kept.
pub fn standard_hadronic() -> Arc<HadronicVp> {
    static STANDARD: OnceLock<Arc<HadronicVp>> = OnceLock::new();
    if let Some(table) = STANDARD.get() {
        return table.clone();
    }
    let built = Arc::new(HadronicVp::new(RModel::standard()));
    STANDARD.get_or_init(|| built).clone()
}

/// A vacuum-polarisation model: none, leptonic, or leptonic + hadronic.
///
/// Cheap to clone (the hadronic table and the factor table are shared through an [`Arc`]).
#[derive(Debug, Clone)]
pub struct Vp {
    choice: VpChoice,
    hadronic: Option<Arc<HadronicVp>>,
    features: Vec<Feature>,
    /// 1/(1 − Π(s + i0)) tabulated, built at first use by whichever clone needs it first.
    /// The build runs on the calling thread (no rayon inside the lock: a rayon worker
    /// blocked on it while its holder waits for rayon work would deadlock).
    factor: Arc<OnceLock<FactorTable>>,
}

/// Multiples of a peak's MΓ at which the factor table breaks (as [`HadronicVp::new`]).
const PEAK_BREAKS: [f64; 7] = [-8.0, -2.0, -0.5, 0.0, 0.5, 2.0, 8.0];

/// A factor-table cell shared by every [`Vp`] of one kind (leptonic, the default full).
fn shared_cell(cell: &'static OnceLock<Arc<OnceLock<FactorTable>>>) -> Arc<OnceLock<FactorTable>> {
    cell.get_or_init(|| Arc::new(OnceLock::new())).clone()
}

impl Vp {
    /// No vacuum polarisation.
    pub fn none() -> Self {
        Vp {
            choice: VpChoice::None,
            hadronic: None,
            features: Vec::new(),
            factor: Arc::new(OnceLock::new()),
        }
    }

    /// Leptons only.
    pub fn leptonic() -> Self {
        static FACTOR: OnceLock<Arc<OnceLock<FactorTable>>> = OnceLock::new();
        Vp {
            choice: VpChoice::Leptonic,
            hadronic: None,
            features: lepton_edges(),
            factor: shared_cell(&FACTOR),
        }
    }

    /// Leptons and the default hadronic model (tabulated once per process, then shared).
    pub fn full() -> Self {
        static FACTOR: OnceLock<Arc<OnceLock<FactorTable>>> = OnceLock::new();
        Vp {
            factor: shared_cell(&FACTOR),
            ..Self::with_hadronic(standard_hadronic())
        }
    }

    /// Leptons and a given hadronic Π (a user R table, a varied model).
    ///
    /// Its features are what a VP-dressed cross-section sees: the leptonic thresholds, the R
    /// model's edges and peaks, except that a Breit–Wigner whose dressed pole has moved off
    /// its mass ([`Vp::dressed_poles`]) is marked at that pole instead of at M². There
    /// 1/(1 − Π) has a zero, not a peak: Π's pole at M² − iMΓ cancels in every dressed
    /// quantity (in σ_pt·R·|1 − Π|⁻² too, where R's own pole meets the same zero), so a
    /// break at M² would only cost integrators panels. (The hadronic part alone,
    /// [`HadronicVp::features`], still marks M²: that is where Π itself peaks.)
    pub fn with_hadronic(hadronic: Arc<HadronicVp>) -> Self {
        let mut vp = Vp {
            choice: VpChoice::Full,
            hadronic: Some(hadronic),
            features: lepton_edges(),
            factor: Arc::new(OnceLock::new()),
        };
        let poles = vp.dressed_poles();
        let moved = |f: &Feature| match *f {
            Feature::Peak { s_gev2, .. } => poles.iter().any(|(m2, _)| *m2 == s_gev2),
            Feature::Edge { .. } => false,
        };
        let hadronic_features = vp.hadronic.as_ref().map_or(Vec::new(), |h| {
            h.features().iter().filter(|f| !moved(f)).copied().collect()
        });
        vp.features.extend(hadronic_features);
        vp.features.extend(poles.into_iter().map(|(_, pole)| pole));
        vp
    }

    /// Peaks of |1/(1 − Π(s))|² that lie away from the masses of the model's Breit–Wigners:
    /// (M² of the resonance, the peak as a [`Feature::Peak`] with s at the pole's real part
    /// and MΓ its |imaginary part|).
    ///
    /// A resonance inside Π, Π_V ≈ B/(s − M² + iMΓ) with B ≈ 3sΓ_ee⁰/(αM) (physics.md §2),
    /// turns 1/(1 − Π) into (s − M² + iMΓ)/g(s) with g(s) = (1 − Π(s))(s − M² + iMΓ)
    /// smooth on the scale of M² (the rest of Π varies there): M² becomes a zero and the
    /// peak of every VP-dressed line shape sits at the zero s_p of g, where
    /// s_p ≈ M² − iMΓ + B/(1 − Π_rest). The model's M and Γ are the bare ones chosen so that
    /// s_p is the PDG pole ([`crate::rmodel::RModel`] undresses them): for the J/ψ, M² lies
    /// ≈ 24 MΓ (≈ 1.1 MeV in √s) below the PDG mass, with a width 25% below the PDG one. An
    /// integral over a dressed cross-section must split at s_p, not only at M². g is found
    /// on the real axis and continued linearly (two secant steps; g is linear there to
    /// ~10⁻⁶ of a width). A pole within half a width of M² (ω, φ) adds nothing the peak at
    /// M² does not already mark, and is left out.
    pub fn dressed_poles(&self) -> Vec<(f64, Feature)> {
        let Some(h) = &self.hadronic else {
            return Vec::new();
        };
        let mut out = Vec::new();
        for r in h.model().resonances() {
            let (m2, mg) = (r.mass_gev * r.mass_gev, r.mass_gev * r.width_gev);
            let pole = super::resummed_pole(|s| self.pi(s), m2, mg);
            let shift = pole.re - m2;
            if pole.re > 0.0 && pole.is_finite() && shift.abs() > 0.5 * pole.im.abs() {
                out.push((
                    m2,
                    Feature::Peak {
                        s_gev2: pole.re,
                        m_gamma_gev2: pole.im.abs(),
                    },
                ));
            }
        }
        out
    }

    /// The choice by name.
    pub fn from_choice(choice: VpChoice) -> Self {
        match choice {
            VpChoice::None => Self::none(),
            VpChoice::Leptonic => Self::leptonic(),
            VpChoice::Full => Self::full(),
        }
    }

    /// The default model with one R region moved by `n_sigma` (for uncertainty budgets);
    /// builds a new table (≈ 25 ms; its s-channel factor table, ≈ 4 ms, at first use).
    pub fn full_varied(region: Region, n_sigma: f64) -> Self {
        let model = standard_hadronic().model().varied(region, n_sigma);
        Self::with_hadronic(Arc::new(HadronicVp::new(model)))
    }

    /// Build the s-channel factor table now (otherwise it is built at first use, ≈ 4 ms with hadrons);
    /// returns its number of pieces (0 without VP, which needs none).
    pub fn tabulate(&self) -> usize {
        match self.choice {
            VpChoice::None => 0,
            _ => self.factor_table().pieces(),
        }
    }

    /// The factor table, built at first use. Off rayon's pool (the main thread of a
    /// command, which builds it before its parallel work through [`Vp::tabulate`]) the
    /// build runs across the pool, outside the cell's lock: a pool worker blocked on the
    /// cell while the builder waits for pool work would deadlock. A racing first use
    /// elsewhere builds its own; the first to finish is kept. On the pool it builds inside
    /// the cell, on the calling thread.
    #[inline]
    fn factor_table(&self) -> &FactorTable {
        match self.factor.get() {
            Some(table) => table,
            None => self.factor_table_first_use(),
        }
    }

    #[cold]
    fn factor_table_first_use(&self) -> &FactorTable {
        if rayon::current_thread_index().is_none() {
            let _ = self.factor.set(self.build_factor_table(true));
        }
        self.factor.get_or_init(|| self.build_factor_table(false))
    }

    fn build_factor_table(&self, parallel: bool) -> FactorTable {
        let (mut breaks, mut roots, mut poles) = (Vec::new(), Vec::new(), Vec::new());
        let peak = |m2: f64, mg: f64, breaks: &mut Vec<f64>| {
            breaks.extend(PEAK_BREAKS.iter().map(|k| m2 + k * mg));
        };
        // A user R table's ends are jumps of R, at the first s whose √s the table
        // covers or no longer covers: the break must sit on that float exactly.
        let table_ends = self
            .hadronic
            .as_ref()
            .and_then(|h| h.model().table())
            .map(|t| t.range_gev());
        let snap = |s: f64| match table_ends {
            Some((lo, _)) if s == lo * lo => first_float(s, |x| x.sqrt() >= lo),
            Some((_, hi)) if s == hi * hi => first_float(s, |x| x.sqrt() > hi),
            _ => s,
        };
        for f in &self.features {
            match *f {
                Feature::Edge { s_gev2 } => roots.push(snap(s_gev2)),
                Feature::Peak {
                    s_gev2,
                    m_gamma_gev2,
                } => {
                    peak(s_gev2, m_gamma_gev2, &mut breaks);
                    // Graded away from it from its outermost break on.
                    poles.push((s_gev2, PEAK_BREAKS[PEAK_BREAKS.len() - 1] * m_gamma_gev2));
                }
            }
        }
        if let Some(h) = &self.hadronic {
            // Every Breit–Wigner's M² (a dressed pole's M² is not among the features),
            // the smooth R's peaks, a user table's rows (kinks of R), and where the
            // hadronic table's pieces meet (Re Π jumps there by ~10⁻¹¹, which
            // |1/(1 − Π)|² up to ~60 on a narrow peak makes visible at our tolerance).
            let model = h.model();
            for r in model.resonances() {
                peak(
                    r.mass_gev * r.mass_gev,
                    r.mass_gev * r.width_gev,
                    &mut breaks,
                );
            }
            for (m2, mg) in model.smooth_peaks() {
                peak(m2, mg, &mut breaks);
            }
            if let Some(t) = model.table() {
                breaks.extend(t.sqrt_s_gev().iter().map(|e| e * e));
            }
            breaks.extend(h.timelike_breaks());
        }
        FactorTable::build(
            &|s| 1.0 / (1.0 - self.pi(s)),
            &breaks,
            &roots,
            &poles,
            parallel,
        )
    }

    /// [`Vp::times_norm_sqr`] compiled for AVX2 + FMA, fused.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2,fma")]
    fn times_norm_sqr_avx2(&self, s_gev2: &[f64], out: &mut [f64]) {
        self.times_norm_sqr::<Fused>(s_gev2, out)
    }

    #[inline(always)]
    fn times_norm_sqr<R: Rounding>(&self, s_gev2: &[f64], out: &mut [f64]) {
        let table = self.factor_table();
        for (o, &s) in out.iter_mut().zip(s_gev2) {
            *o *= self.factor_from::<R>(table, s).norm_sqr();
        }
    }

    /// 1/(1 − Π(s)) from `table`, directly outside its range. (A match, not
    /// `unwrap_or_else`: that stayed a call per point, the Option passed through memory, 4%
    /// of an ISR point.)
    #[inline(always)]
    fn factor_from<R: Rounding>(&self, table: &FactorTable, s_gev2: f64) -> Complex64 {
        match table.get::<R>(s_gev2) {
            Some(factor) => factor,
            None => self.direct_factor(s_gev2),
        }
    }

    /// 1/(1 − Π) outside the factor table's range.
    #[cold]
    #[inline(never)]
    fn direct_factor(&self, s_gev2: f64) -> Complex64 {
        1.0 / (1.0 - self.pi(s_gev2))
    }

    pub fn choice(&self) -> VpChoice {
        self.choice
    }

    /// The hadronic part, when the choice is [`VpChoice::Full`].
    pub fn hadronic(&self) -> Option<&HadronicVp> {
        self.hadronic.as_deref()
    }

    /// The leptonic Π(q² + i0) (zero for [`VpChoice::None`]).
    pub fn pi_leptonic(&self, q2_gev2: f64) -> Complex64 {
        match self.choice {
            VpChoice::None => Complex64::new(0.0, 0.0),
            _ => pi_leptonic(q2_gev2),
        }
    }

    /// The hadronic Π(q² + i0) (zero unless [`VpChoice::Full`]).
    pub fn pi_hadronic(&self, q2_gev2: f64) -> Complex64 {
        self.hadronic
            .as_ref()
            .map_or(Complex64::new(0.0, 0.0), |h| h.pi(q2_gev2))
    }

    /// The complex running coupling α/(1 − Π(q² + i0)).
    pub fn alpha(&self, q2_gev2: f64) -> Complex64 {
        ALPHA / (1.0 - self.pi(q2_gev2))
    }

    /// The usual 1/α(q²) = α⁻¹(1 − Re Π(q²)).
    pub fn alpha_inv(&self, q2_gev2: f64) -> f64 {
        (1.0 - self.pi(q2_gev2).re) / ALPHA
    }
}

/// The first float near `s` where `pred` holds (pred false just below, true from there up).
fn first_float(mut s: f64, pred: impl Fn(f64) -> bool) -> f64 {
    while pred(s) {
        s = s.next_down();
    }
    while !pred(s) {
        s = s.next_up();
    }
    s
}

fn lepton_edges() -> Vec<Feature> {
    LEPTON_MASSES_GEV
        .iter()
        .map(|m| Feature::Edge {
            s_gev2: 4.0 * m * m,
        })
        .collect()
}

impl Polarisation for Vp {
    fn pi(&self, q2_gev2: f64) -> Complex64 {
        self.pi_leptonic(q2_gev2) + self.pi_hadronic(q2_gev2)
    }
    /// From the factor table (≤ 10⁻⁹ relative from the direct 1/(1 − Π); direct outside
    /// its range).
    fn s_channel_factor(&self, s_gev2: f64) -> Complex64 {
        if self.choice == VpChoice::None {
            return Complex64::new(1.0, 0.0);
        }
        self.factor_from::<Separate>(self.factor_table(), s_gev2)
    }
    /// One look at the choice and the table's cell for the whole batch; on CPUs with AVX2
    /// and FMA from a copy compiled for them, the series' steps fused (see
    /// [`crate::numeric::fast::Rounding`]: the last bits may differ from
    /// [`Self::s_channel_factor`]'s).
    fn times_s_channel_norm_sqr(&self, s_gev2: &[f64], out: &mut [f64]) {
        if self.choice == VpChoice::None {
            return;
        }
        #[cfg(target_arch = "x86_64")]
        if crate::numeric::fast::avx2_fma() {
            // SAFETY: the CPU has AVX2 and FMA, checked on the line above.
            return unsafe { self.times_norm_sqr_avx2(s_gev2, out) };
        }
        self.times_norm_sqr::<Separate>(s_gev2, out)
    }
    fn features(&self) -> &[Feature] {
        &self.features
    }
    fn describe(&self) -> String {
        match (&self.choice, &self.hadronic) {
            (VpChoice::Full, Some(h)) => {
                use crate::process::RRatio;
                format!(
                    "vacuum polarisation: leptonic (one loop exact + Steinhauser 1998 two/three loops) + hadronic dispersion over {}",
                    h.model().describe()
                )
            }
            (VpChoice::Leptonic, _) => {
                "vacuum polarisation: leptonic only (one loop exact + Steinhauser 1998 two/three loops)".into()
            }
            _ => "no vacuum polarisation".into(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn choices_are_named_as_on_the_command_line_too() {
        // The command line says `lep`; the cards said `leptonic` only and refused `lep`.
        assert_eq!(VpChoice::from_key("lep"), Some(VpChoice::Leptonic));
        for c in [VpChoice::None, VpChoice::Leptonic, VpChoice::Full] {
            assert_eq!(VpChoice::from_key(c.key()), Some(c));
        }
        assert_eq!(VpChoice::from_key("hadronic"), None);
    }
}
