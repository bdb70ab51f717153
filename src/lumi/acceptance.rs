//! What a luminosity selection accepts, and the part of the hard-scattering angle it keeps
//! after initial-state radiation has boosted the final pair along the beam.
//!
//! Kinematics (exact two-body, massless): the electron keeps the energy fraction z₁ and the
//! positron z₂ before the hard scattering, so ŝ = z₁z₂s and the pair moves along +z with
//! velocity β_b = (z₁ − z₂)/(z₁ + z₂), βγ = |z₁ − z₂|/(2√(z₁z₂)). With c = cosθ* the first final
//! particle's angle in the hard frame (the second is back to back there):
//! - cosθ₁ = (c + β_b)/(1 + β_b c), cosθ₂ = (β_b − c)/(1 − β_b c) (polar angles to the e⁻ beam);
//! - E₁/E_beam = [(z₁ + z₂) + (z₁ − z₂)c]/2, E₂/E_beam = [(z₁ + z₂) − (z₁ − z₂)c]/2;
//! - the acollinearity ξ = π − ∠(p₁, p₂) obeys tan(ξ/2) = βγ sinθ* (from
//!   tan(θ₁ + θ₂) with tanθ₁ = sinθ*/(γ(c + β_b)), tanθ₂ = sinθ*/(γ(β_b − c))).
//!
//! Each cut is therefore an interval in c (the acollinearity cut removes |c| < c_ξ), and
//! the accepted set is at most two intervals, found in closed form.

use crate::error::ParamError;
use crate::process::check_polar_deg;

/// Whether collinear final-state photons are counted with their lepton.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FinalState {
    /// A calorimeter: the lepton's energy includes its collinear photons (FSR integrates out).
    Calorimetric,
    /// A bare track: the energy cut acts on the lepton after final-state radiation.
    BareTrack,
}

/// A polar-angle window θ ∈ [θ_min, θ_max] for one final particle, 0° < θ_min < θ_max < 180°.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PolarRange {
    theta_min_deg: f64,
    theta_max_deg: f64,
}

impl PolarRange {
    /// # Errors
    /// Unless both angles lie within [`check_polar_deg`]'s range (0.1°–179.9°) and
    /// θ_min < θ_max; the error names `theta_min_deg` or `theta_max_deg`.
    pub fn new(theta_min_deg: f64, theta_max_deg: f64) -> Result<Self, ParamError> {
        check_polar_deg("theta_min_deg", theta_min_deg)?;
        check_polar_deg("theta_max_deg", theta_max_deg)?;
        if theta_max_deg <= theta_min_deg {
            return Err(ParamError::new(
                "theta_max_deg",
                theta_max_deg,
                format!("theta_max_deg > theta_min_deg = {theta_min_deg}"),
            ));
        }
        Ok(PolarRange {
            theta_min_deg,
            theta_max_deg,
        })
    }

    pub fn theta_min_deg(&self) -> f64 {
        self.theta_min_deg
    }

    pub fn theta_max_deg(&self) -> f64 {
        self.theta_max_deg
    }

    /// [cos θ_max, cos θ_min].
    fn cos_range(&self) -> (f64, f64) {
        (
            self.theta_max_deg.to_radians().cos(),
            self.theta_min_deg.to_radians().cos(),
        )
    }
}

/// The accepted part of c = cosθ* at given (z₁, z₂): up to two disjoint intervals.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Intervals {
    parts: [(f64, f64); 2],
    count: usize,
}

impl Intervals {
    /// The non-empty intervals, ascending.
    pub fn as_slice(&self) -> &[(f64, f64)] {
        &self.parts[..self.count]
    }
}

/// A luminosity acceptance: a polar window per final particle, a maximum acollinearity,
/// a minimum energy per particle (fraction of the beam energy) and the final-state mode.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Acceptance {
    first: PolarRange,
    second: PolarRange,
    acol_max_deg: f64,
    e_min_frac: f64,
    final_state: FinalState,
    /// Precomputed cos windows and tan(ξ_max/2).
    cos1: (f64, f64),
    cos2: (f64, f64),
    tan_half_acol: f64,
}

/// The tightest acollinearity cut taken, degrees (17 µrad, far below any detector's
/// resolution). σ_vis falls like a power (acol)^β of the cut, as it must, down to ~10⁻¹⁵°,
/// then stalls at rounding level (4.8% of Born below 1e-20° at 10.58 GeV): no cut that
/// tight has a meaning (common practice, no source).
const MIN_ACOL_DEG: f64 = 1e-3;

impl Acceptance {
    /// # Errors
    /// Unless MIN_ACOL_DEG ≤ acol_max_deg ≤ 180 and 0 ≤ e_min_frac < 1 (names the offending
    /// key).
    pub fn new(
        first: PolarRange,
        second: PolarRange,
        acol_max_deg: f64,
        e_min_frac: f64,
        final_state: FinalState,
    ) -> Result<Self, ParamError> {
        if !(MIN_ACOL_DEG..=180.0).contains(&acol_max_deg) {
            return Err(ParamError::new(
                "acol_max_deg",
                acol_max_deg,
                format!("{MIN_ACOL_DEG} ≤ acol_max_deg ≤ 180"),
            ));
        }
        if !(0.0..1.0).contains(&e_min_frac) {
            return Err(ParamError::new(
                "e_min_frac",
                e_min_frac,
                "0 ≤ e_min_frac < 1",
            ));
        }
        let acc = Acceptance {
            first,
            second,
            acol_max_deg,
            e_min_frac,
            final_state,
            cos1: first.cos_range(),
            cos2: second.cos_range(),
            tan_half_acol: if acol_max_deg >= 180.0 {
                f64::INFINITY
            } else {
                (0.5 * acol_max_deg.to_radians()).tan()
            },
        };
        if acc.intervals(1.0, 1.0).as_slice().is_empty() {
            return Err(ParamError::new(
                "theta_min_deg",
                first.theta_min_deg,
                "windows in which a back-to-back pair fits (θ₁ inside the first window and 180° − θ₁ inside the second)",
            ));
        }
        Ok(acc)
    }

    pub fn first(&self) -> PolarRange {
        self.first
    }

    pub fn second(&self) -> PolarRange {
        self.second
    }

    pub fn acol_max_deg(&self) -> f64 {
        self.acol_max_deg
    }

    pub fn e_min_frac(&self) -> f64 {
        self.e_min_frac
    }

    pub fn final_state(&self) -> FinalState {
        self.final_state
    }

    /// True when both particles have the same window (required for identical photons).
    pub fn is_symmetric(&self) -> bool {
        self.first == self.second
    }

    /// The same acceptance with every θ_min edge moved by `d_min_deg` and every θ_max edge
    /// by `d_max_deg` (an alignment variation).
    ///
    /// # Errors
    /// When the moved windows are no longer valid.
    pub fn with_edges_moved(&self, d_min_deg: f64, d_max_deg: f64) -> Result<Self, ParamError> {
        let mv = |r: PolarRange| {
            PolarRange::new(r.theta_min_deg + d_min_deg, r.theta_max_deg + d_max_deg)
        };
        Acceptance::new(
            mv(self.first)?,
            mv(self.second)?,
            self.acol_max_deg,
            self.e_min_frac,
            self.final_state,
        )
    }

    /// The accepted intervals of c = cosθ* when the beams keep the fractions (z₁, z₂)
    /// (both in (0, 1]); see the module notes for the kinematics.
    pub fn intervals(&self, z1: f64, z2: f64) -> Intervals {
        self.resolve(z1, z2).0
    }

    /// Which bound is active at each end of the accepted intervals at (z₁, z₂), as a code:
    /// where it changes, the integrand of a visible cross-section over (z₁, z₂) has a kink
    /// (or, where the acollinearity cut opens, a square-root edge). Equal codes on both
    /// sides of a small step mean the same closed-form branches apply on both.
    pub(crate) fn structure(&self, z1: f64, z2: f64) -> u32 {
        self.resolve(z1, z2).1
    }

    /// The widest accepted interval's length in c at (z₁, z₂), and where nothing is accepted
    /// minus how far its bounds are from meeting: a continuous margin whose zero is where
    /// the acceptance appears (to find the lowest accepted z₁z₂ exactly).
    pub(crate) fn width(&self, z1: f64, z2: f64) -> f64 {
        let b = (z1 - z2) / (z1 + z2);
        let (a1, b1) = self.cos1;
        let (a2, b2) = self.cos2;
        let mut lo = ((a1 - b) / (1.0 - b * a1)).max((b - b2) / (1.0 - b * b2));
        let mut hi = ((b1 - b) / (1.0 - b * b1)).min((b - a2) / (1.0 - b * a2));
        let room = (z1 + z2) - 2.0 * self.e_min_frac;
        let d = (z1 - z2).abs();
        if d > 0.0 {
            lo = lo.max(-room / d);
            hi = hi.min(room / d);
        } else if room < 0.0 {
            return room;
        }
        let ratio = self.tan_half_acol * 2.0 * (z1 * z2).sqrt() / d;
        if ratio >= 1.0 {
            return hi - lo;
        }
        let cx = (1.0 - ratio * ratio).sqrt();
        (hi.min(-cx) - lo).max(hi - lo.max(cx))
    }

    /// The intervals and their structure code ([`Self::structure`]): bits 0–1 the lower
    /// bound (first window, second window, energy), bits 2–3 the upper one, bit 4 the
    /// acollinearity cut active, bits 5–8 which of its two parts exist and whether −c_ξ
    /// and c_ξ bound them; [`EMPTY`] alone when nothing is accepted.
    fn resolve(&self, z1: f64, z2: f64) -> (Intervals, u32) {
        let empty = Intervals {
            parts: [(0.0, 0.0); 2],
            count: 0,
        };
        let b = (z1 - z2) / (z1 + z2);
        let (a1, b1) = self.cos1;
        let (a2, b2) = self.cos2;
        let (l1, l2) = ((a1 - b) / (1.0 - b * a1), (b - b2) / (1.0 - b * b2));
        let (h1, h2) = ((b1 - b) / (1.0 - b * b1), (b - a2) / (1.0 - b * a2));
        let (mut lo, mut lo_code) = if l2 > l1 { (l2, 1) } else { (l1, 0) };
        let (mut hi, mut hi_code) = if h2 < h1 { (h2, 1) } else { (h1, 0) };
        // Energies: |z₁ − z₂|·|c| ≤ (z₁ + z₂) − 2 e_min.
        let room = (z1 + z2) - 2.0 * self.e_min_frac;
        let d = (z1 - z2).abs();
        if room < 0.0 {
            return (empty, EMPTY);
        }
        if d > 0.0 {
            let cmax = room / d;
            if -cmax > lo {
                (lo, lo_code) = (-cmax, 2);
            }
            if cmax < hi {
                (hi, hi_code) = (cmax, 2);
            }
        }
        if lo >= hi {
            return (empty, EMPTY);
        }
        let code = lo_code | (hi_code << 2);
        // Acollinearity: sinθ* ≤ tan(ξ_max/2)/(βγ) removes |c| < c_ξ.
        let bg = d / (2.0 * (z1 * z2).sqrt());
        let ratio = self.tan_half_acol / bg;
        if ratio >= 1.0 {
            let one = Intervals {
                parts: [(lo, hi), (0.0, 0.0)],
                count: 1,
            };
            return (one, code);
        }
        let cx = (1.0 - ratio * ratio).sqrt();
        let mut out = empty;
        let mut code = code | 1 << 4;
        for (k, (l, h, bound)) in [(lo, hi.min(-cx), -cx < hi), (lo.max(cx), hi, cx > lo)]
            .into_iter()
            .enumerate()
        {
            if l < h {
                out.parts[out.count] = (l, h);
                out.count += 1;
                code |= (1 | u32::from(bound) << 1) << (5 + 2 * k);
            }
        }
        if out.count == 0 {
            return (empty, EMPTY);
        }
        (out, code)
    }
}

/// The structure code of an empty acceptance.
pub(crate) const EMPTY: u32 = 1 << 10;

#[cfg(test)]
mod tests {
    use super::*;

    fn sym(theta_min: f64, acol: f64, emin: f64) -> Acceptance {
        let r = PolarRange::new(theta_min, 180.0 - theta_min).unwrap();
        Acceptance::new(r, r, acol, emin, FinalState::Calorimetric).unwrap()
    }

    /// Accept by brute force from the lab four-vectors (independent of the closed forms).
    fn accepted_direct(a: &Acceptance, z1: f64, z2: f64, c: f64) -> bool {
        let s = (1.0 - c * c).sqrt();
        let half = (z1 * z2).sqrt(); // √ŝ/2 in units of E_beam
        let (g, bb) = ((z1 + z2) / (2.0 * half), (z1 - z2) / (z1 + z2));
        // Particle 1 at (s, 0, c), particle 2 at (−s, 0, −c) in the hard frame; boost along z.
        let p1 = (half * s, g * half * (c + bb), g * half * (1.0 + bb * c));
        let p2 = (-half * s, g * half * (-c + bb), g * half * (1.0 - bb * c));
        let theta = |p: (f64, f64, f64)| p.1.atan2(p.0.abs()).to_degrees();
        let th1 = 90.0 - theta(p1);
        let th2 = 90.0 - theta(p2);
        let dot = (p1.0 * p2.0 + p1.1 * p2.1) / (p1.2 * p2.2);
        let acol = 180.0 - dot.clamp(-1.0, 1.0).acos().to_degrees();
        let inside = |th: f64, r: PolarRange| th >= r.theta_min_deg && th <= r.theta_max_deg;
        inside(th1, a.first)
            && inside(th2, a.second)
            && acol <= a.acol_max_deg
            && p1.2 >= a.e_min_frac
            && p2.2 >= a.e_min_frac
    }

    #[test]
    fn closed_form_intervals_match_brute_force_kinematics() {
        let a1 = sym(40.0, 10.0, 0.4);
        let r1 = PolarRange::new(30.0, 120.0).unwrap();
        let r2 = PolarRange::new(45.0, 160.0).unwrap();
        let a2 = Acceptance::new(r1, r2, 25.0, 0.2, FinalState::BareTrack).unwrap();
        for a in [a1, a2] {
            for (z1, z2) in [(1.0, 1.0), (0.9, 1.0), (1.0, 0.6), (0.55, 0.8), (0.3, 0.97)] {
                let iv = a.intervals(z1, z2);
                assert_eq!(iv.as_slice().is_empty(), a.structure(z1, z2) == EMPTY);
                assert_eq!(iv.as_slice().is_empty(), a.width(z1, z2) <= 0.0);
                for k in 0..2001 {
                    let c = -1.0 + 2.0 * (k as f64 + 0.5) / 2001.0;
                    let inside = iv.as_slice().iter().any(|&(l, h)| c >= l && c <= h);
                    // Points within 1e-9 of an edge may go either way in rounding.
                    let near = iv
                        .as_slice()
                        .iter()
                        .any(|&(l, h)| (c - l).abs() < 1e-9 || (c - h).abs() < 1e-9);
                    assert!(
                        near || inside == accepted_direct(&a, z1, z2, c),
                        "z=({z1},{z2}) c={c}: closed {inside}"
                    );
                }
            }
        }
    }

    #[test]
    fn rejects_bad_acceptances() {
        let r = PolarRange::new(40.0, 140.0).unwrap();
        assert!(PolarRange::new(50.0, 40.0).is_err());
        assert!(PolarRange::new(0.0, 40.0).is_err());
        assert!(PolarRange::new(10.0, 180.0).is_err());
        assert!(Acceptance::new(r, r, 0.0, 0.5, FinalState::Calorimetric).is_err());
        assert!(Acceptance::new(r, r, 10.0, 1.0, FinalState::Calorimetric).is_err());
        let fwd = PolarRange::new(10.0, 50.0).unwrap();
        assert!(Acceptance::new(fwd, fwd, 10.0, 0.5, FinalState::Calorimetric).is_err());
    }
}
