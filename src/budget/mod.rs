//! Uncertainty budgets: named sources, their signed shifts at each output point, and the
//! covariance those shifts imply across points.
//!
//! A source is a *variation* of one link of the prediction chain (another radiator, Δα_had
//! at +1σ, the beam energy shifted, …) or a statistical term. Its shift at point i is the
//! change of the output quantity there, in the quantity's own units. A fully correlated
//! source contributes δᵢδⱼ to Cov(i, j); an uncorrelated one δᵢ² to the diagonal only.

use thiserror::Error;

/// How a source's shifts are correlated across output points.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Correlation {
    /// The same cause moves every point coherently (theory, calibration, beam energy).
    Full,
    /// Independent at each point (statistics, per-point efficiencies).
    None,
}

impl Correlation {
    pub fn name(self) -> &'static str {
        match self {
            Correlation::Full => "correlated",
            Correlation::None => "uncorrelated",
        }
    }
}

/// Whether a source is a statistical term or a systematic one (reported as `_stat`/`_syst`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    Statistical,
    Systematic,
}

/// One uncertainty source and its shift at every point.
#[derive(Debug, Clone, PartialEq)]
pub struct Source {
    pub name: String,
    /// The reporting group: sources of one group are added in quadrature in per-source
    /// reports (e.g. the statistical term of each input point, propagated through an
    /// unfolding, forms the group "stat").
    pub group: String,
    pub kind: Kind,
    pub correlation: Correlation,
    /// Signed shift of the output quantity at each point.
    pub shifts: Vec<f64>,
}

#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum BudgetError {
    #[error("budget source '{name}' has {got} shifts for {want} points")]
    Length {
        name: String,
        got: usize,
        want: usize,
    },
    #[error("budget source '{name}' has a non-finite shift at point {index}")]
    NotFinite { name: String, index: usize },
    #[error("budget source '{name}' appears twice")]
    Duplicate { name: String },
}

/// The budget of one quantity over a set of output points.
#[derive(Debug, Clone, PartialEq)]
pub struct Budget {
    points: usize,
    sources: Vec<Source>,
}

/// The symmetric shift (up − down)/2 of a two-sided variation, signed like `up`.
pub fn symmetric_shift(up: f64, down: f64) -> f64 {
    0.5 * (up - down)
}

impl Budget {
    /// An empty budget over `points` output points.
    pub fn new(points: usize) -> Self {
        Budget {
            points,
            sources: Vec::new(),
        }
    }

    /// Add a systematic source that forms its own reporting group.
    ///
    /// # Errors
    /// A shift count different from the point count, a non-finite shift, a repeated name.
    pub fn add(
        &mut self,
        name: impl Into<String>,
        correlation: Correlation,
        shifts: Vec<f64>,
    ) -> Result<(), BudgetError> {
        let name = name.into();
        let group = name.clone();
        self.add_in_group(name, group, Kind::Systematic, correlation, shifts)
    }

    /// Add a relative term: the shift at point i is `rel · values[i]` (a luminosity scale,
    /// an efficiency, a user-declared percentage).
    ///
    /// # Errors
    /// As [`Budget::add`].
    pub fn add_relative(
        &mut self,
        name: impl Into<String>,
        correlation: Correlation,
        rel: f64,
        values: &[f64],
    ) -> Result<(), BudgetError> {
        self.add(name, correlation, values.iter().map(|v| rel * v).collect())
    }

    /// Add a source with an explicit reporting group and kind.
    ///
    /// # Errors
    /// As [`Budget::add`].
    pub fn add_in_group(
        &mut self,
        name: impl Into<String>,
        group: impl Into<String>,
        kind: Kind,
        correlation: Correlation,
        shifts: Vec<f64>,
    ) -> Result<(), BudgetError> {
        let name = name.into();
        let group = group.into();
        if shifts.len() != self.points {
            return Err(BudgetError::Length {
                name,
                got: shifts.len(),
                want: self.points,
            });
        }
        if let Some(index) = shifts.iter().position(|d| !d.is_finite()) {
            return Err(BudgetError::NotFinite { name, index });
        }
        if self.sources.iter().any(|s| s.name == name) {
            return Err(BudgetError::Duplicate { name });
        }
        self.sources.push(Source {
            name,
            group,
            kind,
            correlation,
            shifts,
        });
        Ok(())
    }

    /// The sources in the order added.
    pub fn sources(&self) -> &[Source] {
        &self.sources
    }

    /// Number of output points.
    pub fn points(&self) -> usize {
        self.points
    }

    /// Quadrature sum of the shifts at `point` over sources with `correlation`
    /// (`None` for all sources).
    pub fn total_at(&self, point: usize, correlation: Option<Correlation>) -> f64 {
        self.sources
            .iter()
            .filter(|s| correlation.is_none_or(|c| s.correlation == c))
            .map(|s| s.shifts[point] * s.shifts[point])
            .sum::<f64>()
            .sqrt()
    }

    /// Quadrature sum of the shifts at `point` over the sources of one kind.
    pub fn kind_at(&self, point: usize, kind: Kind) -> f64 {
        self.sources
            .iter()
            .filter(|s| s.kind == kind)
            .map(|s| s.shifts[point] * s.shifts[point])
            .sum::<f64>()
            .sqrt()
    }

    /// The reporting groups in the order their first source was added.
    pub fn groups(&self) -> Vec<&str> {
        let mut out: Vec<&str> = Vec::new();
        for s in &self.sources {
            if !out.contains(&s.group.as_str()) {
                out.push(&s.group);
            }
        }
        out
    }

    /// Quadrature sum of the shifts at `point` over the sources of `group`.
    pub fn group_at(&self, point: usize, group: &str) -> f64 {
        self.sources
            .iter()
            .filter(|s| s.group == group)
            .map(|s| s.shifts[point] * s.shifts[point])
            .sum::<f64>()
            .sqrt()
    }

    /// The covariance matrix across points (row-major, points × points).
    pub fn covariance(&self) -> SymMatrix {
        self.covariance_of(None)
    }

    /// The covariance from the sources of one kind only (`None` for all).
    pub fn covariance_of(&self, kind: Option<Kind>) -> SymMatrix {
        let n = self.points;
        let mut m = SymMatrix::zeros(n);
        for s in self
            .sources
            .iter()
            .filter(|s| kind.is_none_or(|k| s.kind == k))
        {
            match s.correlation {
                Correlation::Full => {
                    for i in 0..n {
                        for j in 0..n {
                            m.data[i * n + j] += s.shifts[i] * s.shifts[j];
                        }
                    }
                }
                Correlation::None => {
                    for i in 0..n {
                        m.data[i * n + i] += s.shifts[i] * s.shifts[i];
                    }
                }
            }
        }
        m
    }

    /// The uncertainty of the sum over all points, Σᵢⱼ Cov(i, j), split into
    /// (uncorrelated, correlated, total).
    pub fn sum_uncertainty(&self) -> (f64, f64, f64) {
        let mut unc = 0.0;
        let mut cor = 0.0;
        for s in &self.sources {
            match s.correlation {
                Correlation::Full => cor += s.shifts.iter().sum::<f64>().powi(2),
                Correlation::None => unc += s.shifts.iter().map(|d| d * d).sum::<f64>(),
            }
        }
        (unc.sqrt(), cor.sqrt(), (unc + cor).sqrt())
    }
}

/// A dense symmetric matrix, row-major.
#[derive(Debug, Clone, PartialEq)]
pub struct SymMatrix {
    n: usize,
    data: Vec<f64>,
}

impl SymMatrix {
    pub fn zeros(n: usize) -> Self {
        SymMatrix {
            n,
            data: vec![0.0; n * n],
        }
    }

    /// The matrix with elements `f(i, j)`, symmetrised as (f(i, j) + f(j, i))/2.
    pub fn from_fn(n: usize, f: impl Fn(usize, usize) -> f64) -> Self {
        let mut m = SymMatrix::zeros(n);
        for i in 0..n {
            for j in 0..n {
                m.data[i * n + j] = 0.5 * (f(i, j) + f(j, i));
            }
        }
        m
    }

    pub fn size(&self) -> usize {
        self.n
    }

    pub fn get(&self, i: usize, j: usize) -> f64 {
        self.data[i * self.n + j]
    }

    /// Rows as vectors (for writers).
    pub fn rows(&self) -> impl Iterator<Item = &[f64]> {
        self.data.chunks(self.n.max(1))
    }

    /// The correlation matrix Cov(i, j)/√(Cov(i, i) Cov(j, j)); 0 off the diagonal and 1
    /// on it where a variance vanishes.
    pub fn correlation(&self) -> SymMatrix {
        let n = self.n;
        let mut c = SymMatrix::zeros(n);
        for i in 0..n {
            for j in 0..n {
                let d = (self.get(i, i) * self.get(j, j)).sqrt();
                c.data[i * n + j] = if i == j {
                    1.0
                } else if d > 0.0 {
                    self.get(i, j) / d
                } else {
                    0.0
                };
            }
        }
        c
    }

    /// True when the matrix is positive semi-definite to a relative tolerance `rel`
    /// of its largest diagonal element (Cholesky with pivots allowed to be ~0).
    pub fn is_positive_semidefinite(&self, rel: f64) -> bool {
        let n = self.n;
        let scale = (0..n).map(|i| self.get(i, i)).fold(0.0, f64::max);
        let eps = rel * scale.max(f64::MIN_POSITIVE);
        let mut l = vec![0.0; n * n];
        for j in 0..n {
            let mut d = self.get(j, j);
            for k in 0..j {
                d -= l[j * n + k] * l[j * n + k];
            }
            if d < -eps {
                return false;
            }
            let djj = d.max(0.0).sqrt();
            l[j * n + j] = djj;
            for i in j + 1..n {
                let mut v = self.get(i, j);
                for k in 0..j {
                    v -= l[i * n + k] * l[j * n + k];
                }
                l[i * n + j] = if djj > eps.sqrt() { v / djj } else { 0.0 };
            }
        }
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn covariance_of_correlated_and_statistical_sources() {
        let mut b = Budget::new(3);
        b.add("stat", Correlation::None, vec![0.3, 0.4, 0.5])
            .unwrap();
        b.add("energy", Correlation::Full, vec![0.1, -0.2, 0.2])
            .unwrap();
        let c = b.covariance();
        // Diagonal: stat² + energy²; off-diagonal: energy_i·energy_j (definition above).
        assert!((c.get(0, 0) - (0.09 + 0.01)).abs() < 1e-15);
        assert!((c.get(0, 1) - (-0.02)).abs() < 1e-15);
        assert!((b.total_at(1, None) - (0.16f64 + 0.04).sqrt()).abs() < 1e-15);
        assert!(c.is_positive_semidefinite(1e-12));
        let r = c.correlation();
        assert!((r.get(1, 1) - 1.0).abs() < 1e-15 && r.get(0, 1) < 0.0);
        // Sum over points: stat adds in quadrature, energy linearly (0.1 − 0.2 + 0.2 = 0.1).
        let (u, k, t) = b.sum_uncertainty();
        assert!((u - 0.5f64.sqrt()).abs() < 1e-15 && (k - 0.1).abs() < 1e-15);
        assert!((t - (0.5f64 + 0.01).sqrt()).abs() < 1e-15);
    }

    #[test]
    fn groups_and_kinds_add_in_quadrature() {
        // Two statistical sources in one group (as an unfolding propagates each input
        // point's statistics), one relative systematic term.
        let mut b = Budget::new(2);
        let st = Kind::Statistical;
        b.add_in_group("stat[0]", "stat", st, Correlation::Full, vec![3.0, 1.0])
            .unwrap();
        b.add_in_group("stat[1]", "stat", st, Correlation::Full, vec![0.0, 4.0])
            .unwrap();
        b.add_relative("lumi", Correlation::Full, 0.01, &[100.0, 200.0])
            .unwrap();
        assert_eq!(b.groups(), vec!["stat", "lumi"]);
        assert!((b.group_at(1, "stat") - 17f64.sqrt()).abs() < 1e-15);
        assert!((b.kind_at(0, Kind::Statistical) - 3.0).abs() < 1e-15);
        assert!((b.kind_at(1, Kind::Systematic) - 2.0).abs() < 1e-15);
        // Statistical covariance: 3·1 + 0·4 off the diagonal.
        let c = b.covariance_of(Some(Kind::Statistical));
        assert!((c.get(0, 1) - 3.0).abs() < 1e-15 && (c.get(1, 1) - 17.0).abs() < 1e-15);
    }

    #[test]
    fn rejects_bad_sources_and_detects_indefinite_matrices() {
        let mut b = Budget::new(2);
        assert!(b.add("x", Correlation::Full, vec![1.0]).is_err());
        assert!(b.add("x", Correlation::Full, vec![1.0, f64::NAN]).is_err());
        b.add("x", Correlation::Full, vec![1.0, 1.0]).unwrap();
        assert!(b.add("x", Correlation::None, vec![1.0, 1.0]).is_err());
        let mut m = SymMatrix::zeros(2);
        m.data = vec![1.0, 2.0, 2.0, 1.0]; // eigenvalues 3 and −1
        assert!(!m.is_positive_semidefinite(1e-12));
    }
}
