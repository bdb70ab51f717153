//! The dressed line-shape model an unfolding iterates on.
//!
//! Through the current dressed values yᵢ at the scan energies the model is
//!
//! L(s) = Σₘ θₘ φₘ(s) + r(√s),
//!
//! where the φₘ are a physics template — the dressed continuum of the process (φ₀) and a
//! Breit–Wigner shape for each declared resonance — with θ the weighted least-squares fit
//! to the yᵢ, and r a natural cubic spline through the residuals yᵢ − Σθₘφₘ(sᵢ). Below the
//! lowest point the residual follows the continuum, r = r₁ φ₀(s)/φ₀(s₁) (the template,
//! i.e. the physics model, continues the line shape down to threshold), and likewise above
//! the highest point. So the spline only has to carry what the template misses, the
//! resonances keep their shape between points, and L goes exactly through every yᵢ.
//!
//! L is linear in y (θ = P·y with a fixed projection P): the forward chain applied to L
//! is a matrix acting on y, which the unfolding uses to propagate covariances exactly.

use super::ScanError;
use super::linalg::Matrix;
use crate::numeric::CubicSpline;
use crate::process::{CrossSection, Feature};
use std::sync::Arc;

/// A resonance of the template: a relativistic Breit–Wigner shape with constant width,
/// (MΓ)²/((s − M²)² + (MΓ)²), 1 at the peak. Its amplitude comes from the fit.
#[derive(Debug, Clone, PartialEq)]
pub struct TemplateResonance {
    pub name: String,
    pub mass_gev: f64,
    pub width_gev: f64,
}

impl TemplateResonance {
    fn shape(&self, s: f64) -> f64 {
        let m2 = self.mass_gev * self.mass_gev;
        let mg = self.mass_gev * self.width_gev;
        mg * mg / ((s - m2).powi(2) + mg * mg)
    }
}

/// The template and the fixed least-squares projection for a set of scan energies.
pub struct ShapeModel {
    continuum: Arc<dyn CrossSection + Send>,
    resonances: Vec<TemplateResonance>,
    sqrt_s_gev: Vec<f64>,
    /// The continuum's threshold (asked per quadrature node; a virtual call otherwise).
    s_threshold: f64,
    /// θ = projection · y; rows are template functions.
    projection: Vec<Vec<f64>>,
    /// The residuals r = residual_map · y at the points (r = y − Φθ).
    residual_map: Matrix,
    /// Row k: the spline's second derivative at knot k per unit residual at each knot.
    second_derivatives: Vec<Vec<f64>>,
    /// The continuum φ₀ at the lowest and the highest point.
    phi0_ends: (f64, f64),
    /// The spline piece at the start of each of equal bins in √s over the points (a lookup
    /// that replaces the binary search in the hot loops), and bins per GeV.
    piece_at_bin: Vec<usize>,
    bins_per_gev: f64,
    features: Vec<Feature>,
}

impl ShapeModel {
    /// The model at energies `sqrt_s_gev` (strictly increasing, all above the continuum's
    /// threshold) with least-squares weights `weights` (e.g. 1/σ_stat²).
    ///
    /// # Errors
    /// Fewer points than template functions, a point at or below threshold, or a
    /// template whose functions cannot be told apart at these energies.
    pub fn new(
        continuum: Arc<dyn CrossSection + Send>,
        resonances: Vec<TemplateResonance>,
        sqrt_s_gev: Vec<f64>,
        weights: &[f64],
    ) -> Result<Self, ScanError> {
        let n = sqrt_s_gev.len();
        let m = 1 + resonances.len();
        if n < m {
            return Err(ScanError::Model(format!(
                "the line-shape template has {m} functions (continuum + {} resonances) but the \
                 scan has {n} points; allowed: at least as many points as template functions",
                resonances.len()
            )));
        }
        let s_th = continuum.threshold_s_gev2();
        if let Some(e) = sqrt_s_gev
            .iter()
            .find(|&&e| e * e <= s_th || continuum.sigma_nb(e * e) <= 0.0)
        {
            return Err(ScanError::Model(format!(
                "sqrt_s_gev = {e} is at or below the process threshold {:.6} GeV",
                s_th.sqrt()
            )));
        }
        let mut model = ShapeModel {
            continuum,
            resonances,
            sqrt_s_gev,
            s_threshold: s_th,
            projection: Vec::new(),
            residual_map: Matrix::zeros(n),
            second_derivatives: Vec::new(),
            phi0_ends: (0.0, 0.0),
            piece_at_bin: Vec::new(),
            bins_per_gev: 0.0,
            features: Vec::new(),
        };
        // Normal equations: (ΦᵀWΦ) θ = ΦᵀW y, so P = (ΦᵀWΦ)⁻¹ΦᵀW.
        let phi: Vec<Vec<f64>> = model
            .sqrt_s_gev
            .iter()
            .map(|&e| model.template(e * e))
            .collect();
        let mut normal = Matrix::zeros(m);
        for a in 0..m {
            for b in 0..m {
                let v = (0..n).map(|i| weights[i] * phi[i][a] * phi[i][b]).sum();
                normal.set(a, b, v);
            }
        }
        let inv = normal.inverse().ok_or_else(|| {
            ScanError::Model(
                "the template's continuum and resonance shapes cannot be told apart at the \
                 scan energies (a declared resonance far from every point?)"
                    .into(),
            )
        })?;
        model.projection = (0..m)
            .map(|a| {
                (0..n)
                    .map(|i| (0..m).map(|b| inv.get(a, b) * phi[i][b]).sum::<f64>() * weights[i])
                    .collect()
            })
            .collect();
        for (l, phi_l) in phi.iter().enumerate() {
            for j in 0..n {
                let fit: f64 = (0..m).map(|a| phi_l[a] * model.projection[a][j]).sum();
                model
                    .residual_map
                    .set(l, j, f64::from(u8::from(l == j)) - fit);
            }
        }
        let mut columns = Vec::with_capacity(n);
        for j in 0..n {
            let mut unit = vec![0.0; n];
            unit[j] = 1.0;
            columns.push(match CubicSpline::new(model.sqrt_s_gev.clone(), unit) {
                Ok(sp) => sp.second_derivatives().to_vec(),
                Err(_) => vec![0.0; n],
            });
        }
        model.second_derivatives = (0..n)
            .map(|k| columns.iter().map(|c| c[k]).collect())
            .collect();
        let (e_lo, e_hi) = (model.sqrt_s_gev[0], model.sqrt_s_gev[n - 1]);
        model.phi0_ends = (
            model.continuum.sigma_nb(e_lo * e_lo),
            model.continuum.sigma_nb(e_hi * e_hi),
        );
        if n >= 2 {
            let bins = 8 * n;
            model.bins_per_gev = bins as f64 / (e_hi - e_lo);
            model.piece_at_bin = (0..bins)
                .map(|b| {
                    let start = e_lo + b as f64 / model.bins_per_gev;
                    CubicSpline::piece(&model.sqrt_s_gev, start)
                })
                .collect();
        }
        let mut features = vec![Feature::Edge { s_gev2: s_th }];
        features.extend_from_slice(model.continuum.features());
        features.extend(model.resonances.iter().map(|r| Feature::Peak {
            s_gev2: r.mass_gev * r.mass_gev,
            m_gamma_gev2: r.mass_gev * r.width_gev,
        }));
        features.extend(
            model
                .sqrt_s_gev
                .iter()
                .map(|e| Feature::Edge { s_gev2: e * e }),
        );
        model.features = features;
        Ok(model)
    }

    /// The template functions (φ₀, φ₁, …) at s.
    fn template(&self, s: f64) -> Vec<f64> {
        let mut v = Vec::with_capacity(1 + self.resonances.len());
        v.push(self.continuum.sigma_nb(s));
        let above = s > self.s_threshold;
        v.extend(
            self.resonances
                .iter()
                .map(|r| if above { r.shape(s) } else { 0.0 }),
        );
        v
    }

    /// The scan energies.
    pub fn sqrt_s_gev(&self) -> &[f64] {
        &self.sqrt_s_gev
    }

    /// The line shape through the values `y` (nb) at the scan energies.
    pub fn through(&self, y: &[f64]) -> LineShape<'_> {
        let theta: Vec<f64> = self
            .projection
            .iter()
            .map(|row| row.iter().zip(y).map(|(p, v)| p * v).sum())
            .collect();
        let resid: Vec<f64> = self
            .sqrt_s_gev
            .iter()
            .zip(y)
            .map(|(&e, v)| v - dot(&theta, &self.template(e * e)))
            .collect();
        let n = resid.len();
        let spline = if n >= 2 {
            CubicSpline::new(self.sqrt_s_gev.clone(), resid.clone()).ok()
        } else {
            None
        };
        let (e_lo, e_hi) = (self.sqrt_s_gev[0], self.sqrt_s_gev[n - 1]);
        LineShape {
            model: self,
            theta,
            spline,
            lo: (e_lo, resid[0] / self.continuum.sigma_nb(e_lo * e_lo)),
            hi: (e_hi, resid[n - 1] / self.continuum.sigma_nb(e_hi * e_hi)),
        }
    }
}

/// A weighted sum Σ w·L(s) over nodes, kept linear in the point values y: after the nodes of
/// a quadrature, [`ShapeModel::row`] turns it into the row k with Σ w·L_y(s) = k·y for every
/// y. The template functions, the spline's values and second derivatives per piece, and the
/// continuum below and above the points are summed separately (O(1) work per node).
#[derive(Debug, Clone)]
pub struct RowSum {
    template: Vec<f64>,
    values: Vec<f64>,
    second: Vec<f64>,
}

impl ShapeModel {
    /// An empty sum for [`Self::add`].
    pub fn row_sum(&self) -> RowSum {
        let n = self.sqrt_s_gev.len();
        RowSum {
            template: vec![0.0; 1 + self.resonances.len()],
            values: vec![0.0; n],
            second: vec![0.0; n],
        }
    }

    /// Add the node (s, w): the same pieces [`LineShape::sigma_nb`] evaluates, by weight.
    pub fn add(&self, sum: &mut RowSum, s: f64, w: f64) {
        if s <= self.s_threshold {
            return;
        }
        let phi0 = self.continuum.sigma_nb(s);
        sum.template[0] += w * phi0;
        for (r, t) in self.resonances.iter().zip(&mut sum.template[1..]) {
            *t += w * r.shape(s);
        }
        let n = self.sqrt_s_gev.len();
        let (e_lo, e_hi) = (self.sqrt_s_gev[0], self.sqrt_s_gev[n - 1]);
        let e = s.sqrt();
        if e <= e_lo || n < 2 {
            sum.values[0] += w * phi0 / self.phi0_ends.0;
        } else if e >= e_hi {
            sum.values[n - 1] += w * phi0 / self.phi0_ends.1;
        } else {
            let i = self.piece(e);
            let c = CubicSpline::piece_weights(&self.sqrt_s_gev, i, e);
            sum.values[i] += w * c[0];
            sum.values[i + 1] += w * c[1];
            sum.second[i] += w * c[2];
            sum.second[i + 1] += w * c[3];
        }
    }

    /// The row k of a finished sum: Σ w·L_y(s) = k·y.
    pub fn row(&self, sum: &RowSum) -> Vec<f64> {
        let n = self.sqrt_s_gev.len();
        // Weights of the residuals r: their values plus their second derivatives' share.
        let u: Vec<f64> = (0..n)
            .map(|l| {
                sum.values[l]
                    + (0..n)
                        .map(|k| sum.second[k] * self.second_derivatives[k][l])
                        .sum::<f64>()
            })
            .collect();
        (0..n)
            .map(|j| {
                let template: f64 = sum
                    .template
                    .iter()
                    .zip(&self.projection)
                    .map(|(t, p)| t * p[j])
                    .sum();
                let residual: f64 = (0..n).map(|l| u[l] * self.residual_map.get(l, j)).sum();
                template + residual
            })
            .collect()
    }

    /// The spline piece holding e, strictly inside the points' range.
    fn piece(&self, e: f64) -> usize {
        let x = &self.sqrt_s_gev;
        let bin = ((e - x[0]) * self.bins_per_gev) as usize;
        let mut i = self.piece_at_bin[bin.min(self.piece_at_bin.len() - 1)];
        while i + 2 < x.len() && x[i + 1] <= e {
            i += 1;
        }
        i
    }

    /// The threshold below which every line shape of the model vanishes.
    pub fn threshold_s_gev2(&self) -> f64 {
        self.s_threshold
    }

    /// The features every line shape of the model has (template edges and peaks, knots).
    pub fn features(&self) -> &[Feature] {
        &self.features
    }
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// The dressed line shape through a set of values: a cross-section of s.
pub struct LineShape<'a> {
    model: &'a ShapeModel,
    theta: Vec<f64>,
    spline: Option<CubicSpline>,
    /// (energy, residual/φ₀) at the lowest and highest points.
    lo: (f64, f64),
    hi: (f64, f64),
}

impl LineShape<'_> {
    /// The fitted template coefficients θ (continuum scale, then resonance amplitudes in nb).
    pub fn template_coefficients(&self) -> &[f64] {
        &self.theta
    }
}

impl CrossSection for LineShape<'_> {
    fn sigma_nb(&self, s: f64) -> f64 {
        let m = self.model;
        if s <= m.s_threshold {
            return 0.0;
        }
        let phi0 = m.continuum.sigma_nb(s);
        let mut v = self.theta[0] * phi0;
        for (r, t) in m.resonances.iter().zip(&self.theta[1..]) {
            v += t * r.shape(s);
        }
        let e = s.sqrt();
        let resid = if e <= self.lo.0 {
            self.lo.1 * phi0
        } else if e >= self.hi.0 {
            self.hi.1 * phi0
        } else {
            self.spline
                .as_ref()
                .map_or(self.lo.1 * phi0, |sp| sp.eval_in_piece(m.piece(e), e))
        };
        v + resid
    }
    fn threshold_s_gev2(&self) -> f64 {
        self.model.s_threshold
    }
    fn features(&self) -> &[Feature] {
        &self.model.features
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::process::FermionPair;

    #[test]
    fn goes_through_the_points_and_reproduces_template_shapes_exactly() {
        // y = 2·σ_μμ + 0.5·BW at the points: the template contains both, so the fit is
        // exact, the residuals vanish and L equals the shape everywhere (to rounding).
        let res = TemplateResonance {
            name: "R".into(),
            mass_gev: 3.1,
            width_gev: 0.04,
        };
        let mumu = Arc::new(FermionPair::muon());
        let e: Vec<f64> = (0..12).map(|i| 3.0 + 0.02 * i as f64).collect();
        let truth = |s: f64| 2.0 * mumu.sigma_nb(s) + 0.5 * res.shape(s);
        let y: Vec<f64> = e.iter().map(|v| truth(v * v)).collect();
        let model =
            ShapeModel::new(mumu.clone(), vec![res.clone()], e.clone(), &[1.0; 12]).unwrap();
        let l = model.through(&y);
        for (ei, yi) in e.iter().zip(&y) {
            assert!((l.sigma_nb(ei * ei) / yi - 1.0).abs() < 1e-12);
        }
        for sqrt_s in [0.5, 2.0, 3.013, 3.1, 3.5] {
            let s: f64 = sqrt_s * sqrt_s;
            assert!(
                (l.sigma_nb(s) / truth(s) - 1.0).abs() < 1e-10,
                "√s={sqrt_s}"
            );
        }
        assert_eq!(l.sigma_nb(0.04), 0.0); // below the μμ threshold
    }

    #[test]
    fn needs_enough_points_above_threshold() {
        let mumu: Arc<dyn CrossSection + Send> = Arc::new(FermionPair::muon());
        let res = TemplateResonance {
            name: "R".into(),
            mass_gev: 3.1,
            width_gev: 0.04,
        };
        assert!(ShapeModel::new(mumu.clone(), vec![res], vec![3.0], &[1.0]).is_err());
        assert!(ShapeModel::new(mumu, vec![], vec![0.2, 3.0], &[1.0, 1.0]).is_err());
    }
}
