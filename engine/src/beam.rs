//! Optional pruning of the Viterbi chart for very large grammars: a per-cell
//! beam, off by default.
//!
//! What is implemented is the per-cell beam of common practice (not the
//! coarse-to-fine passes of Charniak et al. 2006 or Petrov & Klein 2007,
//! which prune with a smaller grammar's posteriors): after a cell's unary
//! closure, a symbol is kept only if its Viterbi score is within
//! [`Beam::log_width`] (natural log) of the cell's best score and, when
//! [`Beam::max_symbols`] is set, among that many best symbols of the cell
//! (ties broken by symbol number). The cell covering the whole sentence is
//! never pruned, so the start symbol is never lost to its own cell's beam.
//!
//! Kept symbols keep only derivations that use kept symbols: the cell's
//! unary closure is taken again over the kept symbols, so a kept symbol's
//! score is the best over its surviving derivations. Pruned symbols get
//! `-inf` and are left out of the cell's present list, and every later pass
//! (inside, count, k-best) reads only present symbols. The sentence
//! probability is then the sum over the surviving trees — a lower bound on
//! the exact one —, the best tree is the best surviving tree (the exact best
//! may have been pruned), and the parse count counts surviving trees. A
//! surviving tree is one whose every chart item (a symbol over a span, at
//! the bottom and at the top of each cell's unary chain) was kept; the
//! unary chains inside one cell are summed whole, as in the exact passes.

use std::fmt;

/// A per-cell beam (see the module documentation).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Beam {
    /// Keep a symbol whose log-probability is at least the cell's best
    /// minus this width (natural log, ≥ 0; `inf` keeps every symbol).
    pub log_width: f64,
    /// Keep at most this many symbols per cell (at least 1), if set.
    pub max_symbols: Option<usize>,
}

/// Why a beam is refused.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BeamError(pub String);

impl fmt::Display for BeamError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for BeamError {}

impl Beam {
    /// A beam of `log_width` (natural log), optionally capped at
    /// `max_symbols` per cell; refuses a negative or NaN width and a cap of 0.
    pub fn new(log_width: f64, max_symbols: Option<usize>) -> Result<Beam, BeamError> {
        if log_width.is_nan() || log_width < 0.0 {
            return Err(BeamError(format!(
                "the beam width must be a natural-log width of 0 or more, not {log_width}"
            )));
        }
        if max_symbols == Some(0) {
            return Err(BeamError(
                "a beam must keep at least 1 symbol per cell".to_string(),
            ));
        }
        Ok(Beam {
            log_width,
            max_symbols,
        })
    }

    /// One line for people: how results were pruned.
    pub fn describe(&self) -> String {
        let size = |n: usize| {
            format!(
                "at most {n} symbol{} per cell",
                if n == 1 { "" } else { "s" }
            )
        };
        match (self.log_width.is_finite(), self.max_symbols) {
            (true, Some(n)) => {
                format!("a beam of {} (natural log) and {}", self.log_width, size(n))
            }
            (true, None) => format!("a beam of {} (natural log) per cell", self.log_width),
            (false, Some(n)) => format!("a beam of {}", size(n)),
            (false, None) => "a beam without limits".to_string(),
        }
    }

    /// Marks in `keep` (all false on entry) the symbols of `present` whose
    /// scores in `row` fall in the beam; returns whether any was dropped.
    pub(crate) fn select(
        &self,
        row: &[f64],
        present: &[u32],
        keep: &mut [bool],
        order: &mut Vec<u32>,
    ) -> bool {
        let best = present
            .iter()
            .map(|&s| row[s as usize])
            .fold(f64::NEG_INFINITY, f64::max);
        let floor = best - self.log_width;
        order.clear();
        order.extend(
            present
                .iter()
                .copied()
                .filter(|&s| row[s as usize] >= floor),
        );
        if let Some(n) = self.max_symbols {
            if order.len() > n {
                order.sort_by(|&a, &b| row[b as usize].total_cmp(&row[a as usize]).then(a.cmp(&b)));
                order.truncate(n);
            }
        }
        for &s in order.iter() {
            keep[s as usize] = true;
        }
        order.len() < present.len()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn select_keeps_the_width_and_the_cap() {
        let row = [-1.0, -5.0, -2.0, f64::NEG_INFINITY, -1.5];
        let present = [0, 1, 2, 4];
        let mut keep = vec![false; row.len()];
        let mut order = Vec::new();
        let beam = Beam::new(1.0, None).unwrap();
        assert!(beam.select(&row, &present, &mut keep, &mut order));
        assert_eq!(keep, [true, false, true, false, true]);
        let mut keep = vec![false; row.len()];
        let beam = Beam::new(10.0, Some(2)).unwrap();
        assert!(beam.select(&row, &present, &mut keep, &mut order));
        assert_eq!(keep, [true, false, false, false, true]);
        let mut keep = vec![false; row.len()];
        let beam = Beam::new(f64::INFINITY, None).unwrap();
        assert!(!beam.select(&row, &present, &mut keep, &mut order));
    }

    #[test]
    fn bad_beams_are_refused() {
        assert!(Beam::new(-1.0, None).is_err());
        assert!(Beam::new(f64::NAN, None).is_err());
        assert!(Beam::new(2.0, Some(0)).is_err());
    }
}
