//! Small dense linear algebra for the unfolding and the fits (n ≲ a few hundred).

/// A square matrix, row-major.
#[derive(Debug, Clone, PartialEq)]
pub struct Matrix {
    n: usize,
    data: Vec<f64>,
}

impl Matrix {
    pub fn zeros(n: usize) -> Self {
        Matrix {
            n,
            data: vec![0.0; n * n],
        }
    }

    pub fn size(&self) -> usize {
        self.n
    }

    pub fn get(&self, i: usize, j: usize) -> f64 {
        self.data[i * self.n + j]
    }

    pub fn set(&mut self, i: usize, j: usize, v: f64) {
        self.data[i * self.n + j] = v;
    }

    /// The matrix–vector product A·x.
    pub fn apply(&self, x: &[f64]) -> Vec<f64> {
        self.data
            .chunks(self.n.max(1))
            .map(|row| row.iter().zip(x).map(|(a, b)| a * b).sum())
            .collect()
    }

    /// The inverse by Gauss–Jordan elimination with partial pivoting; `None` when a pivot
    /// falls below `1e-13` of the largest element (numerically singular).
    pub fn inverse(&self) -> Option<Matrix> {
        let n = self.n;
        let scale = self.data.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        if !(scale > 0.0 && scale.is_finite()) {
            return None;
        }
        let mut a = self.data.clone();
        let mut inv = Matrix::zeros(n);
        for i in 0..n {
            inv.data[i * n + i] = 1.0;
        }
        for col in 0..n {
            let pivot = (col..n)
                .max_by(|&p, &q| a[p * n + col].abs().total_cmp(&a[q * n + col].abs()))
                .unwrap_or(col);
            if a[pivot * n + col].abs() < 1e-13 * scale {
                return None;
            }
            if pivot != col {
                for k in 0..n {
                    a.swap(pivot * n + k, col * n + k);
                    inv.data.swap(pivot * n + k, col * n + k);
                }
            }
            let d = a[col * n + col];
            for k in 0..n {
                a[col * n + k] /= d;
                inv.data[col * n + k] /= d;
            }
            for row in 0..n {
                if row == col {
                    continue;
                }
                let f = a[row * n + col];
                if f != 0.0 {
                    for k in 0..n {
                        a[row * n + k] -= f * a[col * n + k];
                        inv.data[row * n + k] -= f * inv.data[col * n + k];
                    }
                }
            }
        }
        Some(inv)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inverse_of_a_known_matrix() {
        // [[4, 7], [2, 6]]⁻¹ = [[0.6, −0.7], [−0.2, 0.4]] (determinant 10, closed form).
        let mut m = Matrix::zeros(2);
        m.set(0, 0, 4.0);
        m.set(0, 1, 7.0);
        m.set(1, 0, 2.0);
        m.set(1, 1, 6.0);
        let inv = m.inverse().unwrap();
        let want = [0.6, -0.7, -0.2, 0.4];
        for (k, w) in want.iter().enumerate() {
            assert!((inv.get(k / 2, k % 2) - w).abs() < 1e-15);
        }
        assert_eq!(m.apply(&[1.0, 1.0]), vec![11.0, 8.0]);
        let mut singular = Matrix::zeros(2);
        singular.set(0, 0, 1.0);
        singular.set(1, 0, 1.0);
        assert!(singular.inverse().is_none());
    }
}
