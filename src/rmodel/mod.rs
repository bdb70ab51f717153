//! The R(s) model: R = σ(e⁺e⁻ → hadrons)/σ_pt, bare (vacuum polarisation removed), with an
//! uncertainty per region, correlated within the region.
//!
//! The default model (physics.md §3), regions by √s:
//! - `pipi`: π⁺π⁻ from the Gounaris–Sakurai ρ with ρ–ω mixing ([`pipi`]), weighted by
//!   1 − w(√s) where w rises smoothly (3t² − 2t³) from 0 at 1.0 GeV to 1 at 1.2 GeV;
//! - `omega_phi`: ω and φ as constant-width Breit–Wigners from their bare Γ_ee (all decay
//!   channels but ω → π⁺π⁻, which is in F_π), over the whole range;
//! - `inclusive_1_2_gev`: the documented 1–2 GeV form: w(√s) × the three-flavour massless
//!   perturbative R (local duality: the multi-hadron data scatter around it);
//! - `pqcd`: perturbative QCD from 2 GeV with charm and bottom mass effects ([`pqcd`]);
//! - `narrow`: J/ψ, ψ(2S), Υ(1S, 2S, 3S) as constant-width Breit–Wigners with bare Γ_ee
//!   (analytic in the dispersion integral);
//! - every Breit–Wigner (ω, φ and the narrow ones) carries the bare mass and width that put
//!   the pole of the resummed 1/(1 − Π) at the PDG values ([`Resonance`]; the J/ψ's bare mass
//!   is 1.1 MeV below the PDG one and its bare width 25% smaller);
//! - with a user table ([`RTable`]), `user_table` (its share, with the correlated r_syst)
//!   and `user_table_stat` (the point-to-point r_stat) replace the smooth regions over the
//!   table's range (ω, φ are dropped where the table covers their mass; the narrow
//!   resonances too if the table says it includes them).
//!
//! The model R is continuous in s (so Re Π has no logarithmic spikes), except at the ends of
//! a user table, where R jumps from the model to the table: there Re Π has the logarithmic
//! spike that a discontinuous R implies (finite at every representable q², but large within
//! ~10⁻⁹ of the edge). Smooth the ends of a table (or let it start where the model agrees).
//!
//! Uncertainties (1σ, absolute in R, correlated within each region): `pipi` 4% (the GS form
//! with PDG ρ parameters and no ρ′ against data: generous); `omega_phi`, `narrow`: the PDG
//! Γ_ee uncertainties; `inclusive_1_2_gev` 12% (generous: data in 1–2 GeV scatter by
//! ~10%); `pqcd`: α_s(M_Z) ± 0.0009 plus 10% of each heavy quark's R × (1 − v) (duality
//! near the open-flavour thresholds; common practice, no source).

pub mod alpha_s;
pub mod params;
pub mod pipi;
pub mod pqcd;
mod table;

pub use table::{RTable, TableError};

use crate::constants::{ALPHA, ALPHA_S_MZ, ALPHA_S_MZ_UNC, M_Z_GEV};
use crate::process::{Feature, RRatio};
use crate::vp::hadronic::SmoothRule;
use alpha_s::AlphaS;
use num_complex::Complex64;
use params::Parameters;
use pipi::PionFormFactor;

/// An uncertainty region of the R model (its key is the budget's JSON key).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Region {
    PiPi,
    OmegaPhi,
    Inclusive,
    Pqcd,
    Narrow,
    TableSyst,
    TableStat,
}

impl Region {
    /// Every region, in budget order.
    pub const ALL: [Region; 7] = [
        Region::PiPi,
        Region::OmegaPhi,
        Region::Inclusive,
        Region::Pqcd,
        Region::Narrow,
        Region::TableSyst,
        Region::TableStat,
    ];

    /// The regions of the built-in model (no user table), in budget order: the ones an
    /// uncertainty budget varies one at a time.
    pub const MODEL: [Region; 5] = [
        Region::PiPi,
        Region::OmegaPhi,
        Region::Inclusive,
        Region::Pqcd,
        Region::Narrow,
    ];

    /// The snake_case key used in outputs.
    pub fn key(self) -> &'static str {
        match self {
            Region::PiPi => "pipi",
            Region::OmegaPhi => "omega_phi",
            Region::Inclusive => "inclusive_1_2_gev",
            Region::Pqcd => "pqcd",
            Region::Narrow => "narrow",
            Region::TableSyst => "user_table",
            Region::TableStat => "user_table_stat",
        }
    }
}

/// A constant-width Breit–Wigner resonance of the model, with bare parameters: the pole of
/// the resummed 1/(1 − Π) is at the PDG M² − iMΓ, not at this `mass_gev`, `width_gev`.
#[derive(Debug, Clone, PartialEq)]
pub struct Resonance {
    pub name: String,
    /// The bare mass M₀ (GeV).
    pub mass_gev: f64,
    /// The bare total width Γ₀ (GeV): the PDG width less the decays through the photon,
    /// which the resummation adds back.
    pub width_gev: f64,
    /// The bare electronic width Γ_ee⁰ = Γ_ee·|1 − Π(M²)|² (Π without this resonance), GeV.
    pub gamma_ee_bare_gev: f64,
    /// Relative 1σ uncertainty of Γ_ee.
    pub gamma_ee_rel_unc: f64,
    /// 1 − the fraction of decays counted elsewhere.
    pub weight: f64,
    pub region: Region,
}

impl Resonance {
    /// K in R_V(s) = K·s/((s − M²)² + M²Γ²) with K = (9/α²)Γ_ee⁰·Γ·weight: the constant-width
    /// σ = 12πΓ_eeΓ_f/((s − M²)² + M²Γ²) divided by σ_pt = 4πα²/3s, so that
    /// R_V → (9π/α²)MΓ_ee⁰ δ(s − M²) as Γ → 0 (physics.md §2).
    pub fn strength(&self) -> f64 {
        9.0 / (ALPHA * ALPHA) * self.gamma_ee_bare_gev * self.width_gev * self.weight
    }

    /// Its peak in s: M², MΓ.
    pub fn peak(&self) -> Feature {
        Feature::Peak {
            s_gev2: self.mass_gev * self.mass_gev,
            m_gamma_gev2: self.mass_gev * self.width_gev,
        }
    }

    /// R_V(s) for s > 0 (its tail below 4m_π² is of relative size (Γ/M)², kept so that the
    /// dispersion integral has the exact closed form of `vp::hadronic`).
    pub fn r(&self, s: f64) -> f64 {
        if s <= 0.0 {
            return 0.0;
        }
        let m2 = self.mass_gev * self.mass_gev;
        let mg = self.mass_gev * self.width_gev;
        self.strength() * s / ((s - m2) * (s - m2) + mg * mg)
    }
}

/// An R-model variation: `region` moved by `n_sigma` standard deviations.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Variation {
    pub region: Region,
    pub n_sigma: f64,
}

/// The R(s) model (see the module documentation for its regions).
///
/// `RRatio::r` is the bare R: use it in [`crate::process::Hadrons`] for the Born σ.
#[derive(Debug, Clone)]
pub struct RModel {
    pion: PionFormFactor,
    alpha_s: AlphaS,
    alpha_s_up: AlphaS,
    heavy: pqcd::HeavyMasses,
    s_th: f64,
    resonances: Vec<Resonance>,
    table: Option<RTable>,
    variation: Option<Variation>,
    features: Vec<Feature>,
    edition: String,
}

/// Switch from the low-energy exclusive form to the inclusive form: 1.0 → 1.6 GeV.
const SWITCH_GEV: (f64, f64) = (1.0, 1.6);
/// Where perturbative QCD with heavy quarks takes over, GeV.
const PQCD_FROM_GEV: f64 = 2.0;
const PIPI_REL_UNC: f64 = 0.04;
const INCLUSIVE_REL_UNC: f64 = 0.12;
const HEAVY_THRESHOLD_REL_UNC: f64 = 0.10;

fn switch(sqrt_s: f64) -> f64 {
    let t = ((sqrt_s - SWITCH_GEV.0) / (SWITCH_GEV.1 - SWITCH_GEV.0)).clamp(0.0, 1.0);
    t * t * (3.0 - 2.0 * t)
}

impl RModel {
    /// The default model from the shipped PDG 2026 table, α_s(M_Z) = 0.1180.
    pub fn standard() -> Self {
        Self::new(&Parameters::shipped(), ALPHA_S_MZ, None)
    }

    /// The model from `params`, `alpha_s_mz`, and an optional user table.
    pub fn new(params: &Parameters, alpha_s_mz: f64, table: Option<RTable>) -> Self {
        let th = &params.thresholds;
        let omega = params.resonance("omega");
        let pion = PionFormFactor::new(pipi::PionParams {
            m_rho: params.rho.mass_gev,
            gamma_rho: params.rho.width_gev,
            m_rho_prime: params.rho.prime_mass_gev,
            gamma_rho_prime: params.rho.prime_width_gev,
            beta: params.rho.prime_weight,
            m_omega: omega.map_or(0.78266, |o| o.mass_gev),
            gamma_omega: omega.map_or(0.00868, |o| o.width_gev),
            delta: params.rho.omega_mixing,
            m_pi: th.m_pi_charged_gev,
        });
        let run = |a| AlphaS::new(a, M_Z_GEV, th.m_c_msbar_gev, th.m_b_msbar_gev);
        let covered = |m: f64, narrow: bool| {
            table
                .as_ref()
                .is_some_and(|t| t.covers(m) && (!narrow || t.includes_narrow()))
        };
        let resonances: Vec<Resonance> = params
            .resonance
            .iter()
            .filter(|r| !covered(r.mass_gev, r.narrow))
            .map(|r| Resonance {
                name: r.name.clone(),
                mass_gev: r.mass_gev,
                width_gev: r.width_gev,
                gamma_ee_bare_gev: r.gamma_ee_kev * 1e-6,
                gamma_ee_rel_unc: r.gamma_ee_unc_kev / r.gamma_ee_kev,
                weight: 1.0 - r.exclude_fraction,
                region: if r.narrow {
                    Region::Narrow
                } else {
                    Region::OmegaPhi
                },
            })
            .collect();
        let s_th = 4.0 * th.m_pi_charged_gev * th.m_pi_charged_gev;
        let heavy = [
            (th.m_c_msbar_gev, th.m_d0_gev),
            (th.m_b_msbar_gev, th.m_b_charged_gev),
        ];
        let mut features = vec![Feature::Edge { s_gev2: s_th }];
        for e in [
            SWITCH_GEV.0,
            SWITCH_GEV.1,
            th.m_c_msbar_gev,
            th.m_b_msbar_gev,
        ] {
            features.push(Feature::Edge { s_gev2: e * e });
        }
        for (_, m) in heavy {
            let e = 2.0 * m;
            features.push(Feature::Edge { s_gev2: e * e });
            features.push(Feature::Edge {
                s_gev2: (e + pqcd::ONSET_GEV).powi(2),
            });
        }
        if let Some(t) = &table {
            let (lo, hi) = t.range_gev();
            features.push(Feature::Edge { s_gev2: lo * lo });
            features.push(Feature::Edge { s_gev2: hi * hi });
        }
        features.push(Feature::Peak {
            s_gev2: params.rho.mass_gev.powi(2),
            m_gamma_gev2: params.rho.mass_gev * params.rho.width_gev,
        });
        // At the PDG masses; the model's own Breit–Wigners move to their bare ones below.
        for r in &params.resonance {
            features.push(Feature::Peak {
                s_gev2: r.mass_gev * r.mass_gev,
                m_gamma_gev2: r.mass_gev * r.width_gev,
            });
        }
        let mut model = RModel {
            pion,
            alpha_s: run(alpha_s_mz),
            alpha_s_up: run(alpha_s_mz + ALPHA_S_MZ_UNC),
            heavy,
            s_th,
            resonances,
            table,
            variation: None,
            features,
            edition: params.edition.clone(),
        };
        // Re Π of the smooth R by its dispersion rule (µs a point; the tables come later).
        let smooth = SmoothRule::new(&model);
        model.undress_widths(&smooth);
        let pdg: Vec<Feature> = model.resonances.iter().map(Resonance::peak).collect();
        model.undress_poles(&smooth);
        // Π peaks at the bare masses (the dressed line shapes at the PDG ones: `Vp` marks those).
        for (old, r) in pdg.iter().zip(&model.resonances) {
            if let Some(f) = model.features.iter_mut().find(|f| *f == old) {
                *f = r.peak();
            }
        }
        model
    }

    /// Replace each Breit–Wigner's PDG mass and width by the bare ones that put the pole of
    /// the resummed 1/(1 − Π) at the PDG M² − iMΓ.
    ///
    /// A resonance inside Π, Π_V ≈ B/(s − M₀² + iM₀Γ₀), moves the pole of 1/(1 − Π) to
    /// s_p ≈ M₀² − iM₀Γ₀ + B/(1 − Π_rest): up in mass (J/ψ: by ≈ 24 M Γ, 1.1 MeV) and wider by
    /// the decays through the photon that Im Π_rest adds (Γ_ee·(2 + R) + …, ≈ 25% of the
    /// J/ψ width). The PDG mass and width are those of the physical pole, so the bare ones
    /// are M₀² − iM₀Γ₀ = M² − iMΓ − B/(1 − Π_rest), found by moving the bare pole by the
    /// miss of the resummed one until it is below 10⁻⁶ of the width (two or three steps;
    /// the map is a translation to first order). Γ_ee⁰ is already bare.
    fn undress_poles(&mut self, smooth: &SmoothRule) {
        for i in 0..self.resonances.len() {
            let target = {
                let r = &self.resonances[i];
                Complex64::new(r.mass_gev * r.mass_gev, -r.mass_gev * r.width_gev)
            };
            let mut bare = target;
            for _ in 0..6 {
                let pole = self.resummed_pole(i, smooth);
                let miss = target - pole;
                bare += miss;
                let r = &mut self.resonances[i];
                r.mass_gev = bare.re.sqrt();
                r.width_gev = -bare.im / r.mass_gev;
                if miss.norm() < 1e-6 * target.im.abs() {
                    break;
                }
            }
        }
    }

    /// The pole of 1/(1 − Π) near resonance `i` ([`crate::vp::resummed_pole`]), with Π the
    /// leptonic part, the smooth hadronic part (its imaginary part from R) and every
    /// Breit–Wigner.
    fn resummed_pole(&self, i: usize, smooth: &SmoothRule) -> Complex64 {
        let r = &self.resonances[i];
        let pi = |s: f64| {
            let mut pi = self.pi_without(s, smooth, None);
            if s > self.s_threshold() {
                pi.im -= ALPHA / 3.0 * self.r_smooth(s);
            }
            pi
        };
        crate::vp::resummed_pole(pi, r.mass_gev * r.mass_gev, r.mass_gev * r.width_gev)
    }

    /// Replace each PDG Γ_ee by the bare Γ_ee⁰ = Γ_ee·|1 − Π(M²)|², with Π the leptonic,
    /// smooth hadronic and other resonances' parts at M² (physics.md §2).
    fn undress_widths(&mut self, smooth: &SmoothRule) {
        let factors: Vec<f64> = (0..self.resonances.len())
            .map(|i| {
                let m = self.resonances[i].mass_gev;
                let m2 = m * m;
                (1.0 - self.pi_without(m2, smooth, Some(i))).norm_sqr()
            })
            .collect();
        for (r, f) in self.resonances.iter_mut().zip(factors) {
            r.gamma_ee_bare_gev *= f;
        }
    }

    /// Π(s) of the leptons, the real part of the smooth hadronic R and the Breit–Wigners but
    /// `skip`, as the undressing needs it.
    fn pi_without(&self, s: f64, smooth: &SmoothRule, skip: Option<usize>) -> Complex64 {
        let mut pi = crate::vp::leptonic::pi_leptonic(s);
        pi.re += smooth.re(self, s);
        for (j, bw) in self.resonances.iter().enumerate() {
            if Some(j) != skip {
                pi += crate::vp::hadronic::pi_breit_wigner(bw, s);
            }
        }
        pi
    }

    /// This model with `region` shifted by `n_sigma` standard deviations.
    pub fn varied(&self, region: Region, n_sigma: f64) -> Self {
        let mut m = self.clone();
        m.variation = Some(Variation { region, n_sigma });
        // The inclusive region's uncertainty ends at the pQCD onset and pQCD's begins there:
        // a varied R jumps at PQCD_FROM_GEV, an edge every integral over it must split at
        // (unmarked, an ISR point across it missed its estimate by 600×). The nominal R is
        // continuous there and has no edge.
        if matches!(region, Region::Inclusive | Region::Pqcd) && n_sigma != 0.0 {
            let edges = self.part_switches().into_iter();
            m.features
                .extend(edges.map(|s_gev2| Feature::Edge { s_gev2 }));
        }
        for r in m.resonances.iter_mut().filter(|r| r.region == region) {
            r.gamma_ee_bare_gev *= (1.0 + n_sigma * r.gamma_ee_rel_unc).max(0.0);
        }
        if let Some(t) = &self.table {
            match region {
                Region::TableSyst => m.table = Some(t.shifted(n_sigma, false)),
                Region::TableStat => m.table = Some(t.shifted(n_sigma, true)),
                _ => {}
            }
        }
        m
    }

    /// The variation applied, if any.
    pub fn variation(&self) -> Option<Variation> {
        self.variation
    }

    /// The regions this model has (the table regions only with a table).
    pub fn regions(&self) -> Vec<Region> {
        Region::ALL
            .into_iter()
            .filter(|r| self.table.is_some() || !matches!(r, Region::TableSyst | Region::TableStat))
            .collect()
    }

    /// The Breit–Wigner resonances treated analytically in the dispersion integral.
    pub fn resonances(&self) -> &[Resonance] {
        &self.resonances
    }

    /// Peaks of the smooth R as (M², MΓ) in GeV²: the ρ and the ω interference in F_π.
    pub fn smooth_peaks(&self) -> [(f64, f64); 2] {
        let (mr, gr, mw, gw) = self.pion.masses_and_widths();
        [(mr * mr, mr * gr), (mw * mw, mw * gw)]
    }

    /// Where the split of R into regions changes abruptly (GeV²): the pQCD onset, unless a
    /// user table covers it. R is continuous there, but each region's share and its
    /// uncertainty jump, and so does a varied R ([`RModel::varied`] marks it an edge).
    /// Dispersion rules for the parts put a panel boundary there.
    pub fn part_switches(&self) -> Vec<f64> {
        let covered = self.table.as_ref().is_some_and(|t| t.covers(PQCD_FROM_GEV));
        if covered {
            Vec::new()
        } else {
            vec![PQCD_FROM_GEV * PQCD_FROM_GEV]
        }
    }

    /// Where the smooth R starts like a power of (s − s₀): the ππ threshold 4m_π² (GeV²).
    pub fn power_thresholds(&self) -> [f64; 1] {
        [self.s_th]
    }

    /// The lower edge of R (4m_π±²), GeV².
    pub fn s_threshold(&self) -> f64 {
        self.s_th
    }

    /// The user table, if any.
    pub fn table(&self) -> Option<&RTable> {
        self.table.as_ref()
    }

    /// α_s of this model.
    pub fn alpha_s(&self) -> &AlphaS {
        &self.alpha_s
    }

    /// Each smooth region's R at s: (pipi, inclusive, pqcd, table); their sum is the smooth R.
    fn smooth_parts(&self, s: f64) -> [f64; 4] {
        if s <= self.s_th {
            return [0.0; 4];
        }
        let e = s.sqrt();
        if let Some(t) = &self.table
            && t.covers(e)
        {
            return [0.0, 0.0, 0.0, t.eval(e).0];
        }
        if e < PQCD_FROM_GEV {
            let w = switch(e);
            let pipi = if w < 1.0 {
                (1.0 - w) * self.pion.r(s)
            } else {
                0.0
            };
            let incl = if w > 0.0 {
                w * pqcd::r_pqcd(s, &self.alpha_s, &self.heavy, false)
            } else {
                0.0
            };
            [pipi, incl, 0.0, 0.0]
        } else {
            [
                0.0,
                0.0,
                pqcd::r_pqcd(s, &self.alpha_s, &self.heavy, true),
                0.0,
            ]
        }
    }

    /// The smooth part of R (everything but the analytic Breit–Wigners), with the variation.
    pub fn r_smooth(&self, s: f64) -> f64 {
        let parts = self.smooth_parts(s);
        let mut r: f64 = parts.iter().sum();
        if let Some(v) = self.variation
            && !matches!(
                v.region,
                Region::OmegaPhi | Region::Narrow | Region::TableSyst | Region::TableStat
            )
        {
            r += v.n_sigma * self.smooth_unc_from(v.region, s, &parts);
        }
        r.max(0.0)
    }

    /// The 1σ absolute uncertainty of R at s from `region` (correlated within the region).
    pub fn r_unc(&self, region: Region, s: f64) -> f64 {
        match region {
            Region::OmegaPhi | Region::Narrow => self
                .resonances
                .iter()
                .filter(|r| r.region == region)
                .map(|r| r.r(s) * r.gamma_ee_rel_unc)
                .sum(),
            _ => self.smooth_unc_from(region, s, &self.smooth_parts(s)),
        }
    }

    fn smooth_unc_from(&self, region: Region, s: f64, parts: &[f64; 4]) -> f64 {
        match region {
            Region::PiPi => PIPI_REL_UNC * parts[0],
            Region::Inclusive => INCLUSIVE_REL_UNC * parts[1],
            Region::Pqcd if parts[2] > 0.0 => {
                let up = pqcd::r_pqcd(s, &self.alpha_s_up, &self.heavy, true);
                let mut heavy = 0.0;
                for ((m, m_open), q2) in self.heavy.iter().zip([4.0 / 9.0, 1.0 / 9.0]) {
                    let v = (1.0 - 4.0 * m * m / s).max(0.0).sqrt();
                    heavy += 3.0 * q2 * pqcd::heavy_weight(s, *m, *m_open) * (1.0 - v);
                }
                (up - parts[2]).abs() + HEAVY_THRESHOLD_REL_UNC * heavy
            }
            Region::TableSyst => match &self.table {
                Some(t) if s > self.s_th && t.covers(s.sqrt()) => t.eval(s.sqrt()).1,
                _ => 0.0,
            },
            _ => 0.0,
        }
    }

    /// Each smooth region's share of R at s, keyed by region (table regions: syst only).
    pub fn smooth_region_parts(&self, s: f64) -> [(Region, f64); 4] {
        let p = self.smooth_parts(s);
        [
            (Region::PiPi, p[0]),
            (Region::Inclusive, p[1]),
            (Region::Pqcd, p[2]),
            (Region::TableSyst, p[3]),
        ]
    }
}

impl RRatio for RModel {
    /// R(s): zero at and below the π⁺π⁻ threshold 4m_π±² ([`RModel::s_threshold`]).
    ///
    /// Why 2m_π±: it is the lowest channel the model describes with its own threshold
    /// behaviour. 2m_π⁰ is no threshold at all: one photon (C = −1) cannot make π⁰π⁰
    /// (C = +1). π⁰γ (open from m_π⁰) and ηγ are in the model only inside the constant-width
    /// ω and φ Breit–Wigners, whose tail below 2m_π± is the whole ω width (mostly 3π, open
    /// only above 3m_π) without the k³ phase space of a radiative decay: ≈ 0.3 nb at
    /// √s = 0.1–0.2 GeV, where ρ/ω vector dominance puts σ(π⁰γ) at ~10⁻³ nb or below (an
    /// estimate). Cutting at 2m_π± removes that artefact and loses no modelled physics.
    /// The hadronic VP keeps the full Breit–Wigners (its closed forms need them); their
    /// tail's share of Δα_had is of relative size (Γ/M)².
    fn r(&self, s_gev2: f64) -> f64 {
        if s_gev2 <= self.s_th {
            return 0.0;
        }
        let bw: f64 = self.resonances.iter().map(|r| r.r(s_gev2)).sum();
        self.r_smooth(s_gev2) + bw
    }
    fn threshold_s_gev2(&self) -> f64 {
        self.s_th
    }
    fn features(&self) -> &[Feature] {
        &self.features
    }
    fn describe(&self) -> String {
        let mut d = format!(
            "default R model ({}; GS rho-omega, omega/phi BW, inclusive 1-2 GeV, pQCD O(alpha_s^3) alpha_s(M_Z)={}, narrow J/psi, psi(2S), Upsilon(1S-3S))",
            self.edition,
            self.alpha_s.alpha_s_mz()
        );
        if let Some(t) = &self.table {
            let (lo, hi) = t.range_gev();
            d.push_str(&format!(
                "; user R table over {lo}-{hi} GeV (narrow resonances {})",
                if t.includes_narrow() {
                    "included in the table"
                } else {
                    "added analytically"
                }
            ));
        }
        if let Some(v) = self.variation {
            d.push_str(&format!(
                "; varied: {} {:+} sigma",
                v.region.key(),
                v.n_sigma
            ));
        }
        d
    }
}
