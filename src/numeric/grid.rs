//! Grids of values given on the command line or in a card: `3.0` or `start:stop:count`.

use thiserror::Error;

/// A list of points: one value, or `count` points from `start` to `stop` with both ends
/// included (like numpy's linspace).
#[derive(Debug, Clone, PartialEq)]
pub struct Grid {
    points: Vec<f64>,
    /// Given as a plain value (`3.0`), not as a grid (`3:3:1` is a grid of one point).
    single: bool,
}

/// The most points a grid may have: 10⁷ (a few GB of output rows at most; the table cards'
/// row limit is the same). More is a typing slip, not a request.
pub const MAX_COUNT: i64 = 10_000_000;

#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum GridError {
    #[error("'{text}' is not a number or a grid start:stop:count")]
    Syntax { text: String },
    #[error(
        "grid '{text}' has count {count}; allowed: a whole number from 1 to {MAX_COUNT} (1 only when start = stop)"
    )]
    Count { text: String, count: i64 },
    #[error("'{text}' is not finite")]
    NotFinite { text: String },
}

impl Grid {
    /// Parse `x` or `start:stop:count`.
    ///
    /// # Errors
    /// [`GridError`] for text that is neither, a count < 1 or non-finite numbers.
    pub fn parse(text: &str) -> Result<Self, GridError> {
        let parts: Vec<&str> = text.split(':').map(str::trim).collect();
        let num = |p: &str| -> Result<f64, GridError> {
            let v: f64 = p.parse().map_err(|_| GridError::Syntax {
                text: text.to_string(),
            })?;
            if v.is_finite() {
                Ok(v)
            } else {
                Err(GridError::NotFinite {
                    text: text.to_string(),
                })
            }
        };
        match parts.as_slice() {
            [one] => Ok(Grid {
                points: vec![num(one)?],
                single: true,
            }),
            [start, stop, count] => {
                let (start, stop) = (num(start)?, num(stop)?);
                let count: i64 = count.parse().map_err(|_| GridError::Syntax {
                    text: text.to_string(),
                })?;
                if !(1..=MAX_COUNT).contains(&count) || (count == 1 && start != stop) {
                    return Err(GridError::Count {
                        text: text.to_string(),
                        count,
                    });
                }
                Ok(Grid::linspace(start, stop, count as usize))
            }
            _ => Err(GridError::Syntax {
                text: text.to_string(),
            }),
        }
    }

    /// `count ≥ 1` points from `start` to `stop`, both included.
    pub fn linspace(start: f64, stop: f64, count: usize) -> Self {
        let points = if count <= 1 {
            vec![start]
        } else {
            let step = (stop - start) / (count - 1) as f64;
            (0..count)
                .map(|i| {
                    if i == count - 1 {
                        stop
                    } else {
                        start + step * i as f64
                    }
                })
                .collect()
        };
        Grid {
            points,
            single: false,
        }
    }

    /// The points, in the order given.
    pub fn points(&self) -> &[f64] {
        &self.points
    }

    /// True for a plain value (`3.0`); false for any grid, even of one point (`3:3:1`).
    /// The output contract gives a value one object and a grid an array, whatever its size.
    pub fn is_single(&self) -> bool {
        self.single
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_values_and_grids() {
        assert_eq!(Grid::parse("3.5").unwrap().points(), &[3.5]);
        let g = Grid::parse("2:12:6").unwrap();
        assert_eq!(g.points(), &[2.0, 4.0, 6.0, 8.0, 10.0, 12.0]);
        let g = Grid::parse("-100:-1:50").unwrap();
        assert_eq!(g.points().len(), 50);
        assert_eq!(g.points()[0], -100.0);
        assert_eq!(g.points()[49], -1.0);
    }

    #[test]
    fn rejects_bad_grids() {
        assert!(matches!(
            Grid::parse("2:12:0"),
            Err(GridError::Count { .. })
        ));
        assert!(matches!(
            Grid::parse("2:12:1"),
            Err(GridError::Count { .. })
        ));
        assert!(matches!(Grid::parse("2:12"), Err(GridError::Syntax { .. })));
        assert!(matches!(Grid::parse("abc"), Err(GridError::Syntax { .. })));
        assert!(matches!(
            Grid::parse("nan"),
            Err(GridError::NotFinite { .. })
        ));
        assert!(Grid::parse("3:3:1").is_ok());
        // 10⁸ points would need tens of GB: a clear error instead of running out of memory.
        assert!(matches!(
            Grid::parse("2:12:100000000"),
            Err(GridError::Count { .. })
        ));
        assert_eq!(
            Grid::parse("2:12:10000000").unwrap().points().len(),
            10_000_000
        );
    }

    #[test]
    fn only_a_plain_value_is_single() {
        assert!(Grid::parse("3").unwrap().is_single());
        assert!(Grid::parse(" -2.5 ").unwrap().is_single());
        let one = Grid::parse("3:3:1").unwrap();
        assert_eq!(one.points(), &[3.0]);
        assert!(!one.is_single(), "a grid of one point is still a grid");
        assert!(!Grid::parse("2:12:6").unwrap().is_single());
        assert!(!Grid::linspace(3.0, 3.0, 1).is_single());
    }
}
