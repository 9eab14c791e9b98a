//! A sweep or a tolerance study split into pieces that run anywhere and merge bit for bit.
//!
//! A study's work is its batches (every point — or, in a tolerance study, the nominal, every
//! one-at-a-time point and every variant — traced batch by batch with common random numbers,
//! [`Sweep::trace_batch`], [`Tolerance::trace_batch`]); piece k of n traces the batches `⌊(k−1)·B/n⌋ … ⌊k·B/n⌋ − 1` of the B
//! batches and keeps each batch's raw result apart. Merging every batch in batch order is exactly
//! what a single run does, so the pieces' merge is the single run's result bit for bit (sums of
//! floating-point numbers depend on their grouping; batch by batch in order is the one grouping
//! every run uses). Each piece carries the study it was traced for (as read, with the rays and
//! seed it used), so pieces of different studies are never merged together.
//!
//! Any job runner can run the pieces: one command per piece, then one merge (`docs/STUDIES.md`).

use serde::{Deserialize, Serialize};
use serde_json::Value;

use super::sweep::{Sweep, SweepBatch};
use super::tolerance::{Tolerance, ToleranceBatch};
use crate::trace::MergeInOrder;

/// The piece document's version this build reads and writes. Version 2: rays from scrambled
/// point sets and intervals from the spread of their replicates (`trace::sequence`); a piece of
/// version 1 was traced another way and would not merge into the same result, so it is refused.
/// Version 3: three more tally columns (the sums that give the exit face's turn-back fractions
/// their intervals from the replicates, `trace::ledger`), so a version 2 piece's batches have
/// the wrong shape.
pub const PIECE_VERSION: u32 = 3;

/// One piece of a study: the raw result of each of its batches, in batch order — a sweep's
/// ([`SweepBatch`], the default) or a tolerance study's ([`TolerancePiece`]).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Piece<B = SweepBatch> {
    /// The piece document's version: [`PIECE_VERSION`].
    pub piece_version: u32,
    /// The study document this piece was traced for, with its `scenario.trace.rays` and
    /// `scenario.trace.seed` set to those used.
    pub study: Value,
    /// Which piece this is, from 1.
    pub piece: u64,
    /// Of how many pieces.
    pub pieces: u64,
    /// Index of its first batch.
    pub first_batch: u64,
    /// Each of its batches' raw result, in batch order (none for a piece with no batch).
    pub batches: Vec<B>,
}

/// One piece of a tolerance study.
pub type TolerancePiece = Piece<ToleranceBatch>;

/// The batches of piece `k` of `n` (1 ≤ k ≤ n) out of `batches`: an even split, the pieces
/// together covering every batch once.
pub fn piece_range(k: u64, n: u64, batches: u64) -> std::ops::Range<u64> {
    // k·B/n in u128: no overflow for any u64 B and n.
    let at = |j: u64| (j as u128 * batches as u128 / n as u128) as u64;
    at(k - 1)..at(k)
}

impl Sweep {
    /// Trace piece `k` of `n` of this sweep (`study` is the study document as read, with the
    /// rays and seed used; it is kept in the piece). Fails, for people, when k is not
    /// 1 … n.
    pub fn piece(&self, study: &Value, k: u64, n: u64) -> Result<Piece, String> {
        trace_piece(study, k, n, self.batch_count(), |b| self.trace_batch(b))
    }

    /// Merge pieces (`names` label them in messages, one per piece) of this sweep, traced for
    /// `study` (as read, with the rays and seed used), in batch order: the single run's result
    /// bit for bit. Fails, for people, when a piece belongs to another study or another
    /// split, or when batches are missing or held twice.
    pub fn merge_pieces(
        &self,
        study: &Value,
        pieces: &[Piece],
        names: &[String],
    ) -> Result<SweepBatch, String> {
        merge(study, pieces, names, self.batch_count(), |b| self.fits(b))
    }
}

impl Tolerance {
    /// Trace piece `k` of `n` of this tolerance study: its batches of the nominal, every
    /// one-at-a-time point and every variant together (`study` is the study document as read,
    /// with the rays and seed used; it is kept in the piece). Fails, for people, when k is not
    /// 1 … n.
    pub fn piece(&self, study: &Value, k: u64, n: u64) -> Result<TolerancePiece, String> {
        trace_piece(study, k, n, self.batch_count(), |b| self.trace_batch(b))
    }

    /// Merge pieces of this tolerance study in batch order: the single run's result bit for
    /// bit. Fails, for people, as [`Sweep::merge_pieces`] does.
    pub fn merge_pieces(
        &self,
        study: &Value,
        pieces: &[TolerancePiece],
        names: &[String],
    ) -> Result<ToleranceBatch, String> {
        merge(study, pieces, names, self.batch_count(), |b| self.fits(b))
    }
}

/// Piece `k` of `n` of a study of `batches` batches, each traced by `trace`.
fn trace_piece<B: Send>(
    study: &Value,
    k: u64,
    n: u64,
    batches: u64,
    trace: impl Fn(u64) -> B + Sync + Send,
) -> Result<Piece<B>, String> {
    check_k_of_n(k, n)?;
    let range = piece_range(k, n, batches);
    Ok(Piece {
        piece_version: PIECE_VERSION,
        study: study.clone(),
        piece: k,
        pieces: n,
        first_batch: range.start,
        batches: each_batch(range, trace),
    })
}

/// Whether `k/n` names a piece: 1 ≤ k ≤ n.
fn check_k_of_n(k: u64, n: u64) -> Result<(), String> {
    if n == 0 || k == 0 || k > n {
        return Err(format!(
            "must be K/N with 1 ≤ K ≤ N (piece K of N), got {k}/{n}"
        ));
    }
    Ok(())
}

/// Trace each batch of `range` apart (natively in parallel on all cores; the results do not
/// depend on it), in batch order.
fn each_batch<B: Send>(
    range: std::ops::Range<u64>,
    trace: impl Fn(u64) -> B + Sync + Send,
) -> Vec<B> {
    #[cfg(not(target_arch = "wasm32"))]
    {
        use rayon::prelude::*;
        range.into_par_iter().map(trace).collect()
    }
    #[cfg(target_arch = "wasm32")]
    {
        range.map(trace).collect()
    }
}

/// Merge pieces of a study of `batches` batches (each batch checked by `fits`) in batch order.
fn merge<B: MergeInOrder + Clone>(
    study: &Value,
    pieces: &[Piece<B>],
    names: &[String],
    batches: u64,
    fits: impl Fn(&B) -> bool,
) -> Result<B, String> {
    let mut order: Vec<usize> = (0..pieces.len()).collect();
    order.sort_by_key(|&i| (pieces[i].first_batch, pieces[i].batches.len()));
    let mut next = 0u64;
    let mut total: Option<B> = None;
    let mut previous: Option<&str> = None;
    for i in order {
        let (p, name) = (&pieces[i], names[i].as_str());
        if p.piece_version != PIECE_VERSION {
            return Err(format!(
                "{name}: piece_version must be {PIECE_VERSION}, got {}",
                p.piece_version
            ));
        }
        if p.study != *study {
            return Err(format!(
                "{name} was traced for another study (or other --rays or --seed): {}",
                first_difference(&p.study, study, "study")
            ));
        }
        let count = p.batches.len() as u64;
        if p.first_batch > next {
            return Err(missing(next, p.first_batch));
        }
        if p.first_batch < next && count > 0 {
            return Err(format!(
                "batch {} is in two pieces ({} and {name}): give each piece once",
                p.first_batch,
                previous.unwrap_or("another")
            ));
        }
        if p.batches.iter().any(|b| !fits(b)) {
            return Err(format!(
                "{name} does not fit this study (its points or segments differ)"
            ));
        }
        for b in &p.batches {
            match &mut total {
                None => total = Some(b.clone()),
                Some(t) => t.merge_next(b),
            }
        }
        next = p.first_batch + count;
        if count > 0 {
            previous = Some(name);
        }
    }
    if next < batches {
        return Err(missing(next, batches));
    }
    if next > batches {
        return Err(format!(
            "the pieces hold {next} batches; this study has {batches}"
        ));
    }
    total.ok_or_else(|| "no piece holds a batch".to_string())
}

/// The message for batches `from … to − 1` that no piece holds.
fn missing(from: u64, to: u64) -> String {
    if to == from + 1 {
        format!("batch {from} is missing: no piece holds it (give every piece)")
    } else {
        format!(
            "batches {from} to {} are missing: no piece holds them (give every piece)",
            to - 1
        )
    }
}

/// Where two documents first differ, as a field path, for a message.
fn first_difference(a: &Value, b: &Value, at: &str) -> String {
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => {
            for (k, v) in x {
                match y.get(k) {
                    Some(w) if v == w => {}
                    Some(w) => return first_difference(v, w, &format!("{at}.{k}")),
                    None => return format!("{at}.{k} is only in the piece"),
                }
            }
            match y.keys().find(|k| !x.contains_key(*k)) {
                Some(k) => format!("{at}.{k} is not in the piece"),
                None => format!("{at} differs"),
            }
        }
        (Value::Array(x), Value::Array(y)) if x.len() == y.len() => x
            .iter()
            .zip(y)
            .enumerate()
            .find(|(_, (v, w))| v != w)
            .map(|(i, (v, w))| first_difference(v, w, &format!("{at}[{i}]")))
            .unwrap_or_else(|| format!("{at} differs")),
        _ => format!("{at} is {a} in the piece, {b} here"),
    }
}

#[cfg(test)]
mod tests {
    use super::piece_range;

    #[test]
    fn pieces_cover_every_batch_once() {
        for batches in [0u64, 1, 7, 100, u64::MAX] {
            for n in [1u64, 2, 3, 8, 1000] {
                let mut next = 0;
                for k in 1..=n {
                    let r = piece_range(k, n, batches);
                    assert_eq!(r.start, next, "{k}/{n} of {batches}");
                    assert!(r.end >= r.start);
                    next = r.end;
                }
                assert_eq!(next, batches);
            }
        }
    }
}
