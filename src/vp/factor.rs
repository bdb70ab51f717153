//! The timelike s-channel factor 1/(1 − Π(s + i0)) tabulated: the hot path of every dressed
//! cross-section (an ISR point evaluates it hundreds of times).
//!
//! Re and Im are one two-component piecewise Chebyshev interpolant ([`Chebyshev`], adaptive
//! bisection to [`REL_TOL`] of each piece's largest |value|) on s ∈ [[`S_LO`], [`S_HI`]],
//! with a break at every structure the caller lists. Next to a √ edge (a pair threshold,
//! where Π = analytic + c·√(s₀ − s − i0)) a piece is tabulated in w = √|s − s₀| instead of
//! s, in which the factor is analytic up to the edge; an interval with such an edge at both
//! ends is cut in the middle. Elsewhere the variable is s itself (no logarithm to pay).
//!
//! Evaluation: the piece is found in O(1) from the bits of s (for positive floats they are
//! ordered like the values; a cell per 1/32 of a binade holds the first piece it meets,
//! and a binary search runs over the few pieces inside the cell), and the polynomial is
//! summed in the power basis by Estrin's scheme (log₂ K steps of latency instead of
//! Clenshaw's K) with the real and imaginary part side by side.

use super::hadronic::chebyshev::{Chebyshev, PieceStats, graded_towards};
use crate::numeric::fast::{Rounding, estrin};
use num_complex::Complex64;
use rayon::prelude::*;

/// Coefficients per piece (degree K − 1): low enough for a short Estrin tree and a power
/// basis that loses nothing measurable, high enough that pieces stay few.
const K: usize = 12;
/// Tabulated range of s, GeV²: from below the e⁺e⁻ threshold 4m_e² ≈ 1.04·10⁻⁶ to √s = 1 TeV.
pub(super) const S_LO: f64 = 1e-8;
pub(super) const S_HI: f64 = 1e6;
/// Each piece's truncation estimate (last three coefficients) is below this times the
/// largest |1/(1 − Π)| on the piece. The estimate overstates the error by orders of
/// magnitude on converged pieces; `tests/vp_factor_table.rs` checks the table against the
/// direct 1/(1 − Π) at 10⁻⁹ relative, also next to the narrow resonances' minima of |·|.
const REL_TOL: f64 = 1e-11;
/// The tolerance of a piece that starts at a √ edge, in units of [`REL_TOL`] (see the
/// build: a logarithm there has the same tail at every scale).
const EDGE_LOG_ALLOWANCE: f64 = 2.0;
/// Multiple of ε·s·|df/ds| allowed for the samples' rounded arguments.
const ROUNDING: f64 = 2.0 * f64::EPSILON;
/// Beyond a peak's own breaks the pieces grow by this ratio a step: a piece of width w at
/// distance D from a pole pair just off the axis converges at w ≈ D/2 (seen in the
/// bisection's choices next to the Υ(1S), which took a rejected fit per halving).
const POLE_GRADING: f64 = 1.4;
/// Lookup cells per binade of s: 2^(52 − SHIFT) = 512 (24k cells, 95 KB). Near a narrow
/// resonance the pieces shrink to its width and a cell still holds several; 32 a binade
/// left ~60 to search near the Υ(1S) (an ISR point there: 12% more instructions).
const SHIFT: u32 = 43;

/// How a piece's variable w relates to s.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Map {
    /// w = s.
    Plain,
    /// w = √(dir·(s − s₀)): dir = +1 above a √ edge at s₀, −1 below one.
    Root { s0: f64, dir: f64 },
}

impl Map {
    #[inline]
    fn w(self, s: f64) -> f64 {
        match self {
            Map::Plain => s,
            Map::Root { s0, dir } => (dir * (s - s0)).max(0.0).sqrt(),
        }
    }

    fn s(self, w: f64) -> f64 {
        match self {
            Map::Plain => w,
            Map::Root { s0, dir } => s0 + dir * w * w,
        }
    }
}

/// One piece: the map, t = (w − centre)·inv_half ∈ [−1, 1], and (Re, Im) in powers of t.
#[derive(Debug, Clone, Copy)]
struct Piece {
    map: Map,
    centre: f64,
    inv_half: f64,
    p: [Complex64; K],
}

/// The tabulated 1/(1 − Π(s + i0)) of one VP model.
pub(super) struct FactorTable {
    bits_lo: u64,
    /// Per lookup cell, the piece holding the cell's lowest s (one more cell at the end).
    cells: Vec<u32>,
    /// Piece i starts at edges[i]; edges[n] = [`S_HI`].
    edges: Vec<f64>,
    pieces: Vec<Piece>,
}

impl std::fmt::Debug for FactorTable {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "FactorTable({} pieces)", self.pieces.len())
    }
}

impl FactorTable {
    /// Tabulate `factor` (the direct 1/(1 − Π)) with breaks at `breaks` and √ edges at
    /// `roots` (each also a break), more breaks graded away from each peak (s, start) of
    /// `poles` from s ± start on; the segments between breaks on rayon's pool when
    /// `parallel` (never from inside a lock a pool worker may wait on), else on the calling
    /// thread.
    pub(super) fn build(
        factor: &(dyn Fn(f64) -> Complex64 + Sync),
        breaks: &[f64],
        roots: &[f64],
        poles: &[(f64, f64)],
        parallel: bool,
    ) -> Self {
        let mut b: Vec<f64> = breaks.iter().chain(roots).copied().collect();
        // Decades, so that no piece spans more than a factor 10 in s.
        let mut s = S_LO;
        while s < S_HI {
            b.push(s);
            s *= 10.0;
        }
        b.push(S_HI);
        b.retain(|&s| (S_LO..=S_HI).contains(&s));
        b.sort_by(f64::total_cmp);
        let is_root = |s: f64| roots.contains(&s);
        // Breaks a few rounding errors apart are one (the same edge reached through
        // different arithmetic); a √ edge among them is kept.
        b.dedup_by(|later, kept| {
            let same = *later - *kept <= 8.0 * f64::EPSILON * *later;
            if same && is_root(*later) {
                *kept = *later;
            }
            same
        });
        // Graded up to half-way to the next pole or √ edge (not to the next break: the
        // bare M² of a moved pole and the hadronic table's joins sit close to it).
        let mut limits: Vec<f64> = poles
            .iter()
            .map(|p| p.0)
            .chain(roots.iter().copied())
            .collect();
        limits.sort_by(f64::total_cmp);
        let b = graded_towards(&b, poles, &limits, POLE_GRADING);
        let segment = |&(lo, hi, map): &(f64, f64, Map)| -> Vec<(f64, Piece)> {
            // The variable runs from the edge outward. The samples stay a rounding error
            // inside [lo, hi]: on a side of a jump (a model's edge may be one) they take
            // that side's limit, and a root map's end cannot round across.
            let (w_lo, w_hi) = match map {
                Map::Plain => (lo, hi),
                Map::Root { .. } => (0.0, (hi - lo).sqrt()),
            };
            let (s_in_lo, s_in_hi) = (lo * (1.0 + f64::EPSILON), hi * (1.0 - f64::EPSILON));
            let f = |w: f64| {
                let z = factor(map.s(w).clamp(s_in_lo, s_in_hi));
                [z.re, z.im]
            };
            // Plus the floor of sampling at rounded s: near a narrow peak |df/ds|·ε·s
            // reaches ~10⁻¹⁰ of |f|, the direct evaluation's own sensitivity to its
            // argument (the Markov slope in t over the piece's extent in s, a bound).
            //
            // At a lepton threshold the two-loop Π has a ln β term (the Coulomb
            // singularity), ln w in the root variable: its Chebyshev tail is the same on
            // every piece [0, h], ~1.3 times the tolerance, and bisection halved the piece
            // at the edge ~17 times before the rounding floor stopped it. That piece is
            // allowed [`EDGE_LOG_ALLOWANCE`] times the tolerance.
            let tol = |p: &PieceStats| {
                let (s_a, s_b) = (map.s(p.a), map.s(p.b));
                let extent = (s_b - s_a).abs();
                let rel = match map {
                    Map::Root { .. } if p.a == 0.0 => EDGE_LOG_ALLOWANCE * REL_TOL,
                    _ => REL_TOL,
                };
                rel * p.largest + ROUNDING * s_a.max(s_b) * p.slope * 2.0 / extent
            };
            let table = Chebyshev::<K, 2>::build_serial(&f, &[w_lo, w_hi], &tol);
            let (e, n) = (table.edges(), table.pieces());
            let mut pieces = Vec::with_capacity(n);
            for i in 0..n {
                let (a, b) = (e[i], e[i + 1]);
                // Piece i in s: [s(a), s(b)], or [s(b), s(a)] below a root; the first piece
                // in s starts at lo exactly.
                let start = match map {
                    Map::Root { dir, .. } if dir < 0.0 && i + 1 < n => map.s(b),
                    Map::Root { dir, .. } if dir < 0.0 => lo,
                    _ if i == 0 => lo,
                    _ => map.s(a),
                };
                pieces.push((
                    start,
                    Piece {
                        map,
                        centre: 0.5 * (a + b),
                        inv_half: 2.0 / (b - a),
                        p: table
                            .power_coefficients(i)
                            .map(|[re, im]| Complex64::new(re, im)),
                    },
                ));
            }
            pieces
        };
        let mut segments = Vec::with_capacity(b.len());
        for w in b.windows(2) {
            let (lo, hi) = (w[0], w[1]);
            let above = Map::Root { s0: lo, dir: 1.0 };
            let below = Map::Root { s0: hi, dir: -1.0 };
            match (is_root(lo), is_root(hi)) {
                (true, true) => {
                    let mid = 0.5 * (lo + hi);
                    segments.push((lo, mid, above));
                    segments.push((mid, hi, below));
                }
                (true, false) => segments.push((lo, hi, above)),
                (false, true) => segments.push((lo, hi, below)),
                (false, false) => segments.push((lo, hi, Map::Plain)),
            }
        }
        let mut pieces: Vec<(f64, Piece)> = if parallel {
            segments.par_iter().flat_map_iter(segment).collect()
        } else {
            segments.iter().flat_map(segment).collect()
        };
        pieces.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut edges: Vec<f64> = pieces.iter().map(|p| p.0).collect();
        edges.push(S_HI);
        let pieces: Vec<Piece> = pieces.into_iter().map(|p| p.1).collect();
        let bits_lo = S_LO.to_bits();
        let n_cells = ((S_HI.to_bits() - bits_lo) >> SHIFT) as usize + 2;
        let last = pieces.len() - 1;
        // One sweep: the cells' lowest s rise, and so does the piece holding each.
        let mut piece = 0;
        let cells = (0..n_cells)
            .map(|k| {
                let s = f64::from_bits(bits_lo + ((k as u64) << SHIFT));
                while piece < last && edges[piece + 1] <= s {
                    piece += 1;
                }
                piece as u32
            })
            .collect();
        FactorTable {
            bits_lo,
            cells,
            edges,
            pieces,
        }
    }

    /// Number of pieces.
    pub(super) fn pieces(&self) -> usize {
        self.pieces.len()
    }

    /// 1/(1 − Π(s + i0)) from the table; None outside [[`S_LO`], [`S_HI`]). Its series'
    /// steps are rounded as `R` says (fused only where inlined into code compiled for FMA:
    /// hence always inlined).
    #[inline(always)]
    pub(super) fn get<R: Rounding>(&self, s: f64) -> Option<Complex64> {
        if !(S_LO..S_HI).contains(&s) {
            return None;
        }
        let k = ((s.to_bits() - self.bits_lo) >> SHIFT) as usize;
        let (lo, hi) = (self.cells[k] as usize, self.cells[k + 1] as usize);
        let i = lo + last_at_or_below(&self.edges[lo + 1..=hi], s);
        let piece = &self.pieces[i];
        let t = ((piece.map.w(s) - piece.centre) * piece.inv_half).clamp(-1.0, 1.0);
        Some(estrin::<R, _, K>(&piece.p, t))
    }
}

/// How many of the sorted `edges` are ≤ s, by binary search. Written as selects; the
/// compiler turns them into a branch, which with 512 cells a binade (a few pieces each)
/// predicts well for the ordered nodes of a panel: forcing selects
/// (`std::hint::select_unpredictable`) made an ISR point 18% slower.
#[inline]
fn last_at_or_below(edges: &[f64], s: f64) -> usize {
    let (mut base, mut len) = (0usize, edges.len());
    while len > 0 {
        let half = len / 2;
        // edges[base + half] ≤ s moves past it.
        let step = if edges[base + half] <= s { half + 1 } else { 0 };
        base += step;
        len = if step > 0 { len - half - 1 } else { half };
    }
    base
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::fast::{Fused, Separate};

    #[test]
    fn the_search_counts_like_partition_point() {
        // Against the standard library's search, on edges with repeats and on points at,
        // between and outside them.
        let edges = [0.5, 1.0, 1.0, 2.0, 3.5, 3.5, 3.5, 7.0, 9.0];
        for n in 0..=edges.len() {
            let e = &edges[..n];
            for k in 0..200 {
                let s = -0.5 + 0.05 * f64::from(k);
                assert_eq!(
                    last_at_or_below(e, s),
                    e.partition_point(|&x| x <= s),
                    "{n} {s}"
                );
            }
            for &s in e {
                assert_eq!(last_at_or_below(e, s), e.partition_point(|&x| x <= s));
            }
        }
    }

    #[test]
    fn reproduces_a_function_with_a_root_edge_and_a_narrow_pole() {
        // 1/(1 − Π) of a toy Π: a √ threshold at 1 (Π ∝ √(1 − s − i0)) and a pole pair at
        // 5 ± 0.001i: the table agrees with the function to 1e-9 relative on both sides
        // of both, and is exact beyond its range (None there).
        let pi = |s: f64| {
            let root = if s < 1.0 {
                Complex64::new((1.0 - s).sqrt(), 0.0)
            } else {
                Complex64::new(0.0, -(s - 1.0).sqrt())
            };
            0.01 * root + 0.002 / Complex64::new(s - 5.0, 0.001) + 0.001 * s.ln_1p()
        };
        let f = |s: f64| 1.0 / (1.0 - pi(s));
        let breaks: Vec<f64> = [-8.0, -2.0, -0.5, 0.0, 0.5, 2.0, 8.0]
            .iter()
            .map(|k| 5.0 + k * 0.001)
            .collect();
        let t = FactorTable::build(&f, &breaks, &[1.0], &[(5.0, 0.008)], false);
        // Both roundings of the series' steps (the fused one through the library's fma).
        let mut worst = 0.0f64;
        for k in 0..20000 {
            let s = 1e-3 * 1e4f64.powf(k as f64 / 20000.0);
            for s in [s, 1.0 + (s - 1.0) * 1e-6, 5.0 + (s - 5.0) * 1e-3] {
                for got in [t.get::<Separate>(s), t.get::<Fused>(s)] {
                    worst = worst.max((got.unwrap() - f(s)).norm() / f(s).norm());
                }
            }
        }
        assert!(worst < 1e-9, "worst {worst:e}");
        let get = |s| t.get::<Separate>(s);
        assert!(get(2e6).is_none() && get(1e-9).is_none() && get(-1.0).is_none());
    }
}
