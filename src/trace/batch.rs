//! Batch results: per-tally estimates and histograms, merged in batch order.

use serde::{Deserialize, Serialize};

use super::receiver_map::RECEIVER_CELLS;
use super::{Path, Prepared, ANGLE_BINS, ANGULAR_CELLS, MAP_CELLS, ROUTE_BINS};
use crate::stats::Estimate;

/// A histogram of per-ray weights in which each ray lands in at most one bin (or, through
/// [`Hist::add_part`], adds to a bin in several parts that count as one weight): plain sums and
/// sums of squares (merged by addition), so that every bin has its own confidence interval
/// ([`Hist::estimates`]); and, per bin, Σ S_j²/n_j over the replicates j (S_j the bin's sum
/// over replicate j's n_j rays), from which the spread of the replicate means follows, so a
/// bin's interval comes from the replicates as the budget's do ([`crate::stats`]). A sum over
/// several bins has that figure too when the bins form one of the histogram's *groups*, fixed
/// when it is made (the windows of the intensity curve, the uniformity blocks of a map): per
/// group, Σ G_j²/n_j with G_j the group's sum over replicate j ([`Hist::group_estimate`]); any
/// other sum over several bins keeps the per-ray interval.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct Hist {
    /// Σ w per bin.
    #[serde(with = "f64_bytes")]
    pub sum: Vec<f64>,
    /// Σ w² per bin.
    #[serde(with = "f64_bytes")]
    pub sumsq: Vec<f64>,
    /// Σ S_j²/n_j per bin over the replicates closed so far.
    #[serde(default, with = "f64_bytes")]
    pub replicate_sumsq: Vec<f64>,
    /// Replicates closed.
    #[serde(default)]
    pub replicates: u64,
    /// The open replicate's sums per bin (only while a batch is traced).
    #[serde(skip)]
    open: Vec<f64>,
    /// The bins the open replicate has added to.
    #[serde(skip)]
    touched: Vec<usize>,
    /// Σ G_j²/n_j per group over the replicates closed so far (empty without groups).
    #[serde(default, with = "f64_bytes")]
    pub group_replicate_sumsq: Vec<f64>,
    /// Each bin's group (only while a batch is traced; [`NO_GROUP`] for a bin in none).
    #[serde(skip)]
    group_of: Vec<u32>,
    /// The open replicate's sums per group, while it is being closed (only while traced).
    #[serde(skip)]
    group_open: Vec<f64>,
    /// The current ray's sum per bin of the parts not yet in Σ w² ([`Hist::add_part`]; made
    /// on the first part, as few histograms take parts).
    #[serde(skip)]
    ray_open: Vec<f64>,
    /// The bins the current ray has parts in.
    #[serde(skip)]
    ray_bins: Vec<usize>,
}

/// A bin that belongs to no group of its histogram.
pub const NO_GROUP: u32 = u32::MAX;

/// A histogram's numbers as one run of little-endian bytes (8 a number) rather than a list of
/// numbers: a batch crosses between the page's workers as one typed array per list (a single
/// copy each way) instead of thousands of separate numbers. Reads back bytes, or a list of them.
mod f64_bytes {
    use serde::de::{self, SeqAccess, Visitor};
    use serde::{Deserializer, Serializer};

    pub fn serialize<S: Serializer>(v: &[f64], s: S) -> Result<S::Ok, S::Error> {
        let mut bytes = Vec::with_capacity(8 * v.len());
        for x in v {
            bytes.extend_from_slice(&x.to_le_bytes());
        }
        s.serialize_bytes(&bytes)
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<f64>, D::Error> {
        d.deserialize_byte_buf(Numbers)
    }

    struct Numbers;

    impl Numbers {
        fn of<E: de::Error>(bytes: &[u8]) -> Result<Vec<f64>, E> {
            if bytes.len() % 8 != 0 {
                return Err(E::invalid_length(bytes.len(), &"a multiple of 8 bytes"));
            }
            Ok(bytes
                .chunks_exact(8)
                .map(|c| f64::from_le_bytes([c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7]]))
                .collect())
        }
    }

    impl<'de> Visitor<'de> for Numbers {
        type Value = Vec<f64>;

        fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
            f.write_str("a histogram's numbers as little-endian bytes")
        }

        fn visit_bytes<E: de::Error>(self, v: &[u8]) -> Result<Vec<f64>, E> {
            Numbers::of(v)
        }

        fn visit_byte_buf<E: de::Error>(self, v: Vec<u8>) -> Result<Vec<f64>, E> {
            Numbers::of(&v)
        }

        fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Vec<f64>, A::Error> {
            let mut bytes = Vec::new();
            while let Some(b) = seq.next_element::<u8>()? {
                bytes.push(b);
            }
            Numbers::of(&bytes)
        }
    }
}

/// Equal figures (the open replicate's working sums, empty once it is closed, do not count).
impl PartialEq for Hist {
    fn eq(&self, other: &Hist) -> bool {
        self.sum == other.sum
            && self.sumsq == other.sumsq
            && self.replicate_sumsq == other.replicate_sumsq
            && self.replicates == other.replicates
            && self.group_replicate_sumsq == other.group_replicate_sumsq
    }
}

impl Hist {
    fn new(bins: usize) -> Hist {
        Hist {
            sum: vec![0.0; bins],
            sumsq: vec![0.0; bins],
            replicate_sumsq: vec![0.0; bins],
            replicates: 0,
            open: vec![0.0; bins],
            touched: Vec::new(),
            group_replicate_sumsq: Vec::new(),
            group_of: Vec::new(),
            group_open: Vec::new(),
            ray_open: Vec::new(),
            ray_bins: Vec::new(),
        }
    }

    /// A histogram of `group_of.len()` bins whose bins are also summed by group: bin b in
    /// group `group_of[b]` (0-based, below `groups`; [`NO_GROUP`] for none).
    pub(super) fn grouped(group_of: Vec<u32>, groups: usize) -> Hist {
        debug_assert!(group_of
            .iter()
            .all(|&g| g == NO_GROUP || (g as usize) < groups));
        let bins = group_of.len();
        Hist {
            group_replicate_sumsq: vec![0.0; groups],
            group_open: vec![0.0; groups],
            group_of,
            ..Hist::new(bins)
        }
    }

    #[inline]
    pub(super) fn add(&mut self, bin: usize, w: f64) {
        self.sum[bin] += w;
        self.sumsq[bin] += w * w;
        if self.open[bin] == 0.0 {
            self.touched.push(bin);
        }
        self.open[bin] += w;
    }

    /// Weight `w` of the current ray into bin `bin`, as [`Hist::add`], where a ray may add to a
    /// bin several times (the leakage along the route, when a ray leaves in parts): Σ w² takes
    /// the ray's sum in each bin once, at [`Hist::end_ray`], as the per-ray interval needs.
    #[inline]
    pub(super) fn add_part(&mut self, bin: usize, w: f64) {
        self.sum[bin] += w;
        if self.open[bin] == 0.0 {
            self.touched.push(bin);
        }
        self.open[bin] += w;
        if self.ray_open.is_empty() {
            self.ray_open = vec![0.0; self.sum.len()];
        }
        // Parts are positive, so a bin at zero has none of this ray's yet.
        if self.ray_open[bin] == 0.0 {
            self.ray_bins.push(bin);
        }
        self.ray_open[bin] += w;
    }

    /// The current ray is done: each bin it added parts to takes the square of their sum in
    /// Σ w² (a single part: its square, as [`Hist::add`] takes it). In time linear in the
    /// number of bins the ray touched, however many parts it left (a ray in a painted zone
    /// leaves one at each bounce).
    #[inline]
    pub(super) fn end_ray(&mut self) {
        for bin in self.ray_bins.drain(..) {
            let w = std::mem::take(&mut self.ray_open[bin]);
            self.sumsq[bin] += w * w;
        }
    }

    /// A histogram of these per-bin sums Σw and Σw², with no replicates (every bin keeps the
    /// per-ray interval).
    pub fn from_sums(sum: Vec<f64>, sumsq: Vec<f64>) -> Hist {
        Hist {
            sum,
            sumsq,
            ..Hist::default()
        }
    }

    /// Close the open replicate of `rays` rays: each bin's Σ S_j²/n_j takes its sum.
    pub(super) fn close_replicate(&mut self, rays: u64) {
        if rays == 0 || self.open.is_empty() {
            return;
        }
        let n = rays as f64;
        let grouped = !self.group_of.is_empty();
        for &b in &self.touched {
            let s = self.open[b];
            self.replicate_sumsq[b] += s * s / n;
            self.open[b] = 0.0;
            if grouped {
                if let Some(g) = self.group_open.get_mut(self.group_of[b] as usize) {
                    *g += s;
                }
            }
        }
        self.touched.clear();
        if grouped {
            // Every group, touched or not (an untouched one adds 0): a few dozen at most.
            for (q, g) in self
                .group_replicate_sumsq
                .iter_mut()
                .zip(self.group_open.iter_mut())
            {
                *q += *g * *g / n;
                *g = 0.0;
            }
        }
        self.replicates += 1;
    }

    fn merge(&mut self, other: &Hist) {
        self.sum
            .iter_mut()
            .zip(&other.sum)
            .for_each(|(a, b)| *a += b);
        self.sumsq
            .iter_mut()
            .zip(&other.sumsq)
            .for_each(|(a, b)| *a += b);
        self.replicate_sumsq
            .iter_mut()
            .zip(&other.replicate_sumsq)
            .for_each(|(a, b)| *a += b);
        self.group_replicate_sumsq
            .iter_mut()
            .zip(&other.group_replicate_sumsq)
            .for_each(|(a, b)| *a += b);
        self.replicates += other.replicates;
    }

    /// The estimate of the sum of bins `bins` over `rays` rays, as [`Hist::estimates`] gives a
    /// bin's: with the spread of its replicate means when the bins are exactly group `group`
    /// (the caller's word: the groups were fixed when the histogram was made), else the
    /// per-ray spread alone (`group` `None`, or a histogram without group sums, e.g. one read
    /// from an older file).
    pub fn group_estimate(
        &self,
        rays: u64,
        bins: impl IntoIterator<Item = usize>,
        group: Option<usize>,
    ) -> Estimate {
        let (mut s, mut q) = (0.0, 0.0);
        for b in bins {
            s += self.sum[b];
            q += self.sumsq[b];
        }
        let r = group.and_then(|g| self.group_replicate_sumsq.get(g).copied());
        self.estimate(rays, s, q, r)
    }

    /// The estimate of a bin or group with sums Σw = `s`, Σw² = `q` and Σ S_j²/n_j = `r` (when
    /// kept) over `rays` rays: the spread of its replicate means is Σ n_j (m_j − x̄)² =
    /// Σ S_j²/n_j − (Σ S_j)²/n.
    fn estimate(&self, rays: u64, s: f64, q: f64, r: Option<f64>) -> Estimate {
        let e = Estimate::from_raw_sums(rays, s, q);
        match r {
            Some(r) if self.replicates > 0 => Estimate {
                replicates: self.replicates,
                replicates_m2: (r - s * s / rays.max(1) as f64).max(0.0),
                ..e
            },
            _ => e,
        }
    }

    /// The estimate of each bin over `rays` rays ([`Estimate::from_raw_sums`]), with the
    /// spread of its replicate means, Σ n_j (m_j − x̄)² = Σ S_j²/n_j − (Σ S_j)²/n.
    pub fn estimates(&self, rays: u64) -> impl Iterator<Item = Estimate> + '_ {
        self.sum
            .iter()
            .zip(&self.sumsq)
            .enumerate()
            .map(move |(b, (&s, &q))| {
                self.estimate(rays, s, q, self.replicate_sumsq.get(b).copied())
            })
    }
}

/// The raw result of one or more merged batches. Serialisable, so that batches traced in
/// separate workers can be sent back and merged in batch order.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Batch {
    /// Per-tally estimates (fixed tallies, leaked by segment, absorbed by segment, contacts).
    pub tallies: Vec<Estimate>,
    /// Delivered weight on the exit face, MAP_CELLS² (row-major, y rows, x columns).
    pub exit_map: Hist,
    /// Delivered weight by polar angle beyond the exit face, 1° bins.
    pub angle_hist: Hist,
    /// Delivered weight by direction cosines, ANGULAR_CELLS².
    pub angular_map: Hist,
    /// Delivered weight by horizontal and vertical angle beyond the exit face
    /// ([`crate::far_field`]: its cells, then the light leaving sideways).
    pub far_field: Hist,
    /// Leaked (and contact-lost) weight along the route, ROUTE_BINS bins.
    pub route_leak: Hist,
    /// Weight absorbed by the wall's coatings along the route, ROUTE_BINS bins (no bins when
    /// the scenario has no coatings).
    #[serde(default)]
    pub route_coating: Hist,
    /// Delivered weight that lands on the receiver.
    pub receiver: Estimate,
    /// Where that weight lands on the receiver, RECEIVER_CELLS² over its bounding box (as
    /// `exit_map`); no bins without a receiver.
    #[serde(default)]
    pub receiver_map: Hist,
    /// Wall interactions (reflections, refractions out) counted.
    pub wall_interactions: u64,
    /// Wall hits by segment.
    pub wall_hits: Vec<u64>,
    /// Rays traced.
    pub rays: u64,
    /// Sampled paths (batch 0 only).
    pub paths: Vec<Path>,
}

impl Batch {
    pub(super) fn empty(p: &Prepared) -> Batch {
        let nseg = p.route.segments.len();
        Batch {
            tallies: vec![Estimate::default(); p.ledger.len()],
            exit_map: block_grouped(MAP_CELLS),
            angle_hist: window_grouped(ANGLE_BINS),
            angular_map: Hist::new(ANGULAR_CELLS * ANGULAR_CELLS),
            far_field: Hist::new(crate::far_field::BINS),
            route_leak: Hist::new(ROUTE_BINS),
            route_coating: Hist::new(if p.coatings.is_empty() { 0 } else { ROUTE_BINS }),
            receiver: Estimate::default(),
            receiver_map: match p.scenario.receiver {
                Some(_) => block_grouped(RECEIVER_CELLS),
                None => Hist::new(0),
            },
            wall_interactions: 0,
            wall_hits: vec![0; nseg],
            rays: 0,
            paths: Vec::new(),
        }
    }

    /// Close the open replicate of `rays` rays in every histogram ([`Hist::close_replicate`]).
    pub(super) fn close_replicate(&mut self, rays: u64) {
        for h in [
            &mut self.exit_map,
            &mut self.angle_hist,
            &mut self.angular_map,
            &mut self.far_field,
            &mut self.route_leak,
            &mut self.route_coating,
            &mut self.receiver_map,
        ] {
            h.close_replicate(rays);
        }
    }

    /// Merge the next batch (in batch order) into this one.
    pub fn merge(&mut self, other: &Batch) {
        for (a, b) in self.tallies.iter_mut().zip(&other.tallies) {
            a.merge(b);
        }
        self.exit_map.merge(&other.exit_map);
        self.angle_hist.merge(&other.angle_hist);
        self.angular_map.merge(&other.angular_map);
        self.far_field.merge(&other.far_field);
        self.route_leak.merge(&other.route_leak);
        self.route_coating.merge(&other.route_coating);
        self.receiver.merge(&other.receiver);
        self.receiver_map.merge(&other.receiver_map);
        self.wall_interactions += other.wall_interactions;
        self.wall_hits
            .iter_mut()
            .zip(&other.wall_hits)
            .for_each(|(a, b)| *a += b);
        self.rays += other.rays;
        if self.paths.is_empty() {
            self.paths = other.paths.clone();
        }
    }
}

/// A histogram of `bins` 1° rings whose groups are the windows of the peak search
/// ([`super::peak_windows`], window k group k): the on-axis cone and the peak have intervals
/// from their replicates.
fn window_grouped(bins: usize) -> Hist {
    let mut group_of = vec![NO_GROUP; bins];
    let windows = super::peak_windows(bins);
    for (k, &(from, to)) in windows.iter().enumerate() {
        group_of[from..to].fill(k as u32);
    }
    Hist::grouped(group_of, windows.len())
}

/// A map of `cells` × `cells` whose groups are the uniformity blocks
/// ([`crate::exit_figures::block_of_cell`]).
fn block_grouped(cells: usize) -> Hist {
    let (group_of, groups) = crate::exit_figures::block_of_cell(cells);
    Hist::grouped(group_of, groups)
}

/// A batch's figures without its histograms and paths: the tallies, the receiver, the wall
/// counts and the rays — what a design study reports of each of its scenarios. About 50 times
/// smaller than a [`Batch`] (no exit map, angular maps, intensity or route profile), so a
/// study's batches of every point travel light between workers and in pieces. Merged exactly as
/// [`Batch::merge`] merges these fields, so a study's figures are a plain trace's bit for bit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BatchTallies {
    /// Per-tally estimates (as [`Batch::tallies`]).
    pub tallies: Vec<Estimate>,
    /// Delivered weight that lands on the receiver.
    pub receiver: Estimate,
    /// Wall interactions counted.
    pub wall_interactions: u64,
    /// Wall hits by segment.
    pub wall_hits: Vec<u64>,
    /// Rays traced.
    pub rays: u64,
}

impl From<Batch> for BatchTallies {
    fn from(b: Batch) -> BatchTallies {
        BatchTallies {
            tallies: b.tallies,
            receiver: b.receiver,
            wall_interactions: b.wall_interactions,
            wall_hits: b.wall_hits,
            rays: b.rays,
        }
    }
}

impl BatchTallies {
    /// Merge the next batch (in batch order) into this one.
    pub fn merge(&mut self, other: &BatchTallies) {
        for (a, b) in self.tallies.iter_mut().zip(&other.tallies) {
            a.merge(b);
        }
        self.receiver.merge(&other.receiver);
        self.wall_interactions += other.wall_interactions;
        self.wall_hits
            .iter_mut()
            .zip(&other.wall_hits)
            .for_each(|(a, b)| *a += b);
        self.rays += other.rays;
    }
}

impl Prepared {
    /// Whether batch tallies have this scenario's shape (tallies, segments).
    pub fn fits_tallies(&self, t: &BatchTallies) -> bool {
        t.tallies.len() == self.ledger.len() && t.wall_hits.len() == self.route.segments.len()
    }

    /// The report of merged batch tallies: every figure that comes from the tallies (delivered,
    /// budget, segments, contacts, receiver) exactly as [`Prepared::report`] gives it for the
    /// full batches; the maps, intensity and route profile are all zero (not traced) and the
    /// absolute figures that need them are not meaningful.
    pub fn report_tallies(&self, t: &BatchTallies) -> super::TraceReport {
        let mut b = Batch::empty(self);
        b.tallies.clone_from(&t.tallies);
        b.receiver = t.receiver;
        b.wall_interactions = t.wall_interactions;
        b.wall_hits.clone_from(&t.wall_hits);
        b.rays = t.rays;
        self.report(&b)
    }
}

pub(super) fn same_bins(a: &Hist, b: &Hist) -> bool {
    a.sum.len() == b.sum.len()
        && a.sumsq.len() == b.sumsq.len()
        && a.replicate_sumsq.len() == b.replicate_sumsq.len()
        && a.group_replicate_sumsq.len() == b.group_replicate_sumsq.len()
}

/// Folds batch results into one running total in batch order — the only order that reproduces
/// a single run bit for bit — holding only the batches that arrive ahead of their turn (from
/// several workers). Memory stays at one batch plus the early ones, however many rays.
///
/// Generic over what is merged ([`MergeInOrder`]): a scenario's [`Batch`] (the default) or a
/// sweep's batch of every point.
#[derive(Debug, Clone)]
pub struct PrefixMerger<B = Batch> {
    total: Option<B>,
    next: u64,
    early: std::collections::BTreeMap<u64, B>,
}

/// A batch result that folds the next batch (in batch order) into itself.
pub trait MergeInOrder {
    /// Merge the next batch (in batch order) into this one.
    fn merge_next(&mut self, next: &Self);
}

/// Fold batches `0 .. count` in batch order, chunk by chunk: `trace_chunk(first..end)` returns
/// the chunk's batches in batch order (traced however it likes, e.g. in parallel), each folded
/// into the total as it comes, then `progress(end)`. The result is the serial fold's bit for bit,
/// whatever the chunk size; `None` when `count` is 0.
pub fn fold_in_order<B: MergeInOrder>(
    count: u64,
    chunk: u64,
    mut trace_chunk: impl FnMut(std::ops::Range<u64>) -> Vec<B>,
    mut progress: impl FnMut(u64),
) -> Option<B> {
    let chunk = chunk.max(1);
    let mut total: Option<B> = None;
    let mut first = 0;
    while first < count {
        let end = (first + chunk).min(count);
        for b in trace_chunk(first..end) {
            match &mut total {
                None => total = Some(b),
                Some(t) => t.merge_next(&b),
            }
        }
        progress(end);
        first = end;
    }
    total
}

impl MergeInOrder for Batch {
    fn merge_next(&mut self, next: &Batch) {
        self.merge(next);
    }
}

impl<B> Default for PrefixMerger<B> {
    fn default() -> Self {
        PrefixMerger {
            total: None,
            next: 0,
            early: std::collections::BTreeMap::new(),
        }
    }
}

impl<B: MergeInOrder> PrefixMerger<B> {
    /// An empty merger (nothing folded yet).
    pub fn new() -> PrefixMerger<B> {
        PrefixMerger::default()
    }

    /// Keep batch `index` until its turn. A batch already folded is ignored.
    pub fn add(&mut self, index: u64, batch: B) {
        if index >= self.next {
            self.early.insert(index, batch);
        }
    }

    /// Fold batches up to `count` (exclusive) into the total; `None` while one of them is still
    /// missing, else the total of batches `0..folded()` (at least `count`, never more than
    /// asked for: batches beyond `count` wait).
    pub fn fold_to(&mut self, count: u64) -> Option<&B> {
        while self.next < count {
            let b = self.early.remove(&self.next)?;
            match &mut self.total {
                None => self.total = Some(b),
                Some(t) => t.merge_next(&b),
            }
            self.next += 1;
        }
        self.total.as_ref()
    }

    /// Batches folded so far.
    pub fn folded(&self) -> u64 {
        self.next
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A group's interval comes from its replicates' sums: bins 0 and 1 form group 0, bin 2
    /// group 1, bin 3 none. In every replicate of 4 rays two land in bin 0 with weight 3/4 and
    /// two in bin 1 with 1/4 (in varying order), so group 0's sum is the same in each replicate
    /// (no spread, a zero half-width, though the rays' weights in it spread); group 1 gets one ray of weight 1 in even replicates
    /// and none in odd ones, whose spread is worked out by hand. Merging two halves gives the
    /// whole's figures.
    #[test]
    fn a_groups_interval_comes_from_its_replicate_sums() {
        let trace = |replicates: std::ops::Range<u64>| {
            let mut h = Hist::grouped(vec![0, 0, 1, NO_GROUP], 2);
            for j in replicates {
                let split = if j % 3 == 0 {
                    [0, 0, 1, 1]
                } else {
                    [1, 0, 1, 0]
                };
                for b in split {
                    h.add(b, if b == 0 { 0.75 } else { 0.25 });
                }
                if j % 2 == 0 {
                    h.add(2, 1.0);
                }
                h.add(3, 0.25);
                h.close_replicate(4);
            }
            h
        };
        let h = trace(0..10);
        let rays = 40;
        let g0 = h.group_estimate(rays, 0..2, Some(0));
        assert_eq!((g0.mean, g0.replicates, g0.replicates_m2), (0.5, 10, 0.0));
        assert_eq!(g0.half_width95(), Some(0.0));
        assert!(h.group_estimate(rays, 0..2, None).half_width95().unwrap() > 0.0);
        // Group 1: replicate means 1/4 (5 of them) and 0 (5), mean 1/8:
        // Σ n_j (m_j − x̄)² = 10 · 4 · (1/8)² = 0.625.
        let g1 = h.group_estimate(rays, 2..3, Some(1));
        assert_eq!(g1.mean, 0.125);
        assert!(
            (g1.replicates_m2 - 0.625).abs() < 1e-15,
            "{}",
            g1.replicates_m2
        );
        // A one-bin group's figure is its bin's.
        let bin2 = h.estimates(rays).nth(2).unwrap();
        assert!((bin2.replicates_m2 - g1.replicates_m2).abs() < 1e-15);
        let mut halves = trace(0..6);
        halves.merge(&trace(6..10));
        assert_eq!(halves, h);
        // Without group sums (e.g. a histogram made from sums alone) the per-ray spread is used.
        let plain = Hist::from_sums(h.sum.clone(), h.sumsq.clone());
        let e = plain.group_estimate(rays, 0..2, Some(0));
        assert_eq!(e.replicates, 0);
        assert!(e.half_width95().unwrap() > 0.0);
    }

    /// A histogram reads back from its own JSON exactly (its lists as bytes), also from a list of
    /// byte values; a byte count that is not a whole number of numbers is refused.
    #[test]
    fn a_histogram_round_trips_through_its_bytes() {
        let mut h = Hist::new(5);
        h.add(1, 0.25);
        h.add(3, 1.0 / 3.0);
        h.add(3, 1e-300);
        h.close_replicate(7);
        let text = serde_json::to_string(&h).unwrap();
        let back: Hist = serde_json::from_str(&text).unwrap();
        assert_eq!(back, h);
        assert_eq!(back.sum[3].to_bits(), h.sum[3].to_bits());
        assert!(serde_json::from_str::<Hist>(
            r#"{"sum":[0,0,0],"sumsq":[],"replicate_sumsq":[],"replicates":0}"#
        )
        .is_err());
        let ok: Hist =
            serde_json::from_str(r#"{"sum":[0,0,0,0,0,0,240,63],"sumsq":[0,0,0,0,0,0,0,0]}"#)
                .unwrap();
        assert_eq!((ok.sum[0], ok.sumsq[0], ok.replicates), (1.0, 0.0, 0));
    }

    /// A ray that adds to a bin in several parts counts as one weight in Σ w² (the per-ray
    /// interval's variance), the parts summed first; its sums and the replicate's are as if
    /// added whole.
    #[test]
    fn parts_of_one_ray_count_as_one_weight() {
        let mut h = Hist::new(4);
        h.add_part(1, 0.5);
        h.add_part(2, 0.25);
        h.add_part(1, 0.25);
        h.end_ray();
        h.add_part(1, 0.125);
        h.end_ray();
        assert_eq!(h.sum[1], 0.5 + 0.25 + 0.125);
        assert_eq!(h.sumsq[1], 0.75 * 0.75 + 0.125 * 0.125);
        assert_eq!(h.sumsq[2], 0.25 * 0.25);
        assert_eq!((h.sum[0], h.sumsq[0]), (0.0, 0.0));
        h.close_replicate(2);
        assert_eq!(h.replicate_sumsq[1], 0.875 * 0.875 / 2.0);
    }
}
