//! The 3D Monte Carlo tracer.
//!
//! Each ray starts on the emitter with unit weight. At a flat or domed entry face its Fresnel
//! reflectance R (unpolarised) is split by expected value: R is tallied as reflected and the ray
//! enters with weight 1 − R. Inside, it is followed segment by segment with exact wall
//! intersections. At a side wall above the critical angle it is totally reflected; below it,
//! it is reflected with probability q = min(1, 2R) carrying R/q of its weight, the rest leaving
//! there, or else it leaves whole (leaked, or lost into a contact zone; `walk`'s `wall`): the
//! expected weights are those of the Fresnel split, with about half the noise of drawing the
//! whole ray one way. Bulk absorption (Beer–Lambert, P = P₀ e^(−αL)) lowers the weight
//! continuously and is tallied by segment. At the exit face the ray is turned back (totally
//! reflected beyond the critical angle, else Fresnel-reflected) or delivered; what the exit face
//! turns back on a ray's first arrival, and what becomes of it, is tallied apart as well
//! ([`ExitTurnBack`]); rays reaching the entry face from inside may leave it (returned).
//! Polarisation is not carried: every Fresnel decision uses the unpolarised reflectance.
//!
//! Work is split into fixed batches of [`BATCH_RAYS`] rays, each of whole replicates of
//! [`sequence::REPLICATE_RAYS`]. A ray's start and direction come from its replicate's
//! scrambled Sobol point set (randomized quasi-Monte Carlo, [`sequence`]), every other random
//! number from its own generator seeded from (seed, batch index, ray index), so that two
//! scenarios traced with the same seed share their random numbers ray by ray (common random
//! numbers; the exit face's schedule of first Fresnel events, [`sequence`], is shared by the
//! replicate's rays in order); the budget's intervals come from the spread of the replicates
//! ([`crate::stats`]); batches merge in index order, so a result does not depend on how many
//! threads or workers ran it. Transcendental functions come from `libm`, so native and wasm
//! give bit-identical results.
//!
//! Layout: this file prepares a scenario and traces and merges batches; `walk` follows one ray,
//! one function per event; `ledger` names the tally columns (the only place that knows their
//! order); `batch` holds a batch's tallies and histograms and merges batches in order;
//! `receiver_map` places delivered light on the receiver's map; `report`
//! turns merged batches into the [`TraceReport`]; `names` holds the report's enums (segment
//! kind, units). The statistics themselves are in [`crate::stats`].

mod batch;
mod ledger;
mod names;
pub mod receiver_map;
mod report;
pub mod sequence;
mod walk;
mod zones;

pub use crate::scenario::SegmentKind;
use batch::same_bins;
pub use batch::{fold_in_order, Batch, BatchTallies, Hist, MergeInOrder, PrefixMerger, NO_GROUP};
use ledger::Ledger;
pub(crate) use names::Named;
pub use names::{FluxUnit, IntensityUnit};
pub use report::{
    peak_windows, Absolute, AngularMap, Budget, CoatingReport, ContactReport, ExitMap,
    ExitTurnBack, Intensity, IntensityWindow, RouteProfile, SegmentReport, TraceReport,
    TurnBackEnds, TurnBackFractions, Value, AXIS_CONE_HALF_ANGLE_DEG,
};
use walk::{KeptPath, Watch};
pub use zones::lambertian_direction;
use zones::CoatingZone;

use rand_core::SeedableRng;
use rand_pcg::Pcg64Mcg;
use serde::{Deserialize, Serialize};

#[cfg(not(target_arch = "wasm32"))]
use crate::error::RunError;
use crate::error::TirError;
use crate::geometry::{PlacedRoute, Shape};
use crate::limits::{PATH_POINTS, PATH_POINTS_TOTAL};
use crate::scenario::{Scenario, ScenarioIndices, Section, ZonePlace};
use crate::source::SourceSampler;
use crate::stats::{Estimate, ShiftedSums};
use sequence::{RayDraws, Scramble, REPLICATE_RAYS};

/// Rays per batch.
pub const BATCH_RAYS: u64 = 4096;
/// Cells across the exit-face irradiance map.
pub const MAP_CELLS: usize = 41;
/// Polar-angle bins (1° each) of the intensity curve.
pub const ANGLE_BINS: usize = 90;
/// Cells across the 2D angular map (direction cosines −1…1).
pub const ANGULAR_CELLS: usize = 41;
/// Bins along the route for the leakage profile.
pub const ROUTE_BINS: usize = 200;

/// One ray's figures for a watched route segment ([`Prepared::trace_batch_watching`]): weights,
/// as fractions of the ray's launch weight 1.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct RayFigures {
    /// Weight delivered through the exit face.
    pub delivered: f64,
    /// Weight on first entering the segment going forward (0 if it never did).
    pub entered: f64,
    /// Weight leaked through the segment's side walls.
    pub leaked: f64,
}

/// Every ray's figures of a batch, in ray order ([`Prepared::trace_batch_per_ray_all`]):
/// weights, as fractions of the ray's launch weight 1.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RayTallies {
    /// Weight delivered through the exit face.
    pub delivered: Vec<f64>,
    /// Per route segment: weight leaked through its side walls.
    pub leaked: Vec<Vec<f64>>,
    /// Weight landing on the receiver (0 without one).
    pub receiver: Vec<f64>,
}

/// What became of a sampled path (for drawing).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Fate {
    /// Left through the exit face.
    Delivered,
    /// Missed the entry face.
    Missed,
    /// Reflected at the entry face.
    ReflectedEntry,
    /// Left through a side wall.
    Leaked,
    /// Lost into a contact zone.
    Contact,
    /// Absorbed by a coated zone of the wall.
    Coating,
    /// Left back through the entry face.
    Returned,
    /// Stopped by the interaction cap.
    Stopped,
}

/// A sampled ray path for drawing: global points, mm.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Path {
    /// Fate.
    pub fate: Fate,
    /// Vertices: emitter, entry, every wall hit, and the last point (a short stub outside when
    /// it left the guide); only the first [`path_points_each`] of a longer path.
    pub points: Vec<[f64; 3]>,
    /// Whether the path was cut short: the ray went on (to its fate) past the last point kept.
    pub cut_short: bool,
    /// Where parts of the ray's weight left while the ray went on to its fate (a side wall's
    /// Fresnel reflection below the critical angle, or a coating's, splits the weight;
    /// docs/REFERENCES.md §14; a corner's mirror keeps R of it), in vertex order; left out of
    /// the JSON when there are none. The flat entry face's reflected share is not listed:
    /// nearly every ray has one, at its entry point.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub parts_left: Vec<PartLeft>,
}

/// A part of a kept path's weight that left while the ray went on.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PartLeft {
    /// The vertex it left at (an index into the path's points).
    pub vertex: u32,
    /// What became of it: leaked, lost into a mount, or absorbed by a coating.
    pub fate: Fate,
    /// Its weight, as a share of the ray's weight at launch.
    pub weight: f64,
}

/// The most vertices each of `kept` kept paths holds: [`PATH_POINTS`], and together no more
/// than [`PATH_POINTS_TOTAL`] (see there for why).
pub fn path_points_each(kept: usize) -> usize {
    PATH_POINTS.min(PATH_POINTS_TOTAL / kept.max(1))
}

/// A scenario prepared for tracing: validated, placed, indices resolved.
#[derive(Debug, Clone)]
pub struct Prepared {
    /// The scenario.
    pub scenario: Scenario,
    /// Its indices.
    pub indices: ScenarioIndices,
    /// The placed route.
    pub route: PlacedRoute,
    source: SourceSampler,
    alpha_per_mm: f64,
    /// sin² of the critical angle against the surroundings, (n_out/n_core)².
    sin2_critical_out: f64,
    contacts: Vec<ContactZone>,
    /// Whether any contact zone touches each segment (most wall hits need no zone look-up).
    segment_has_contact: Vec<bool>,
    coatings: Vec<CoatingZone>,
    /// Whether any coated zone lies on each segment.
    segment_has_coating: Vec<bool>,
    /// Whether each segment's wall hits are taken in closed form, a run at a time
    /// ([`crate::geometry::StraightRun`]): an untapered straight with no contact zone, no
    /// coating and (segment 0) no entry pocket, whose every hit is then alike.
    closed_form_run: Vec<bool>,
    /// A side wall's Fresnel reflection of probability R below the critical angle, and a coated
    /// zone's of probability ρ, is drawn with probability q = min(1, this × R), carrying R/q of
    /// the weight ([`walk::WALL_SPLIT_FACTOR`]; 1: the whole ray goes one way).
    wall_split_factor: f64,
    entry_half: (f64, f64),
    entry_round: bool,
    exit_half: (f64, f64),
    /// The tally columns.
    ledger: Ledger,
    /// The shaped faces' end caps, each with its face frame ([`crate::faces::cap`]), and the
    /// textured exit face's roughness: `None` for a flat face.
    faces: walk::ShapedFaces,
}

#[derive(Debug, Clone, Copy)]
pub(super) struct ContactZone {
    place: ZonePlace,
    n: f64,
    /// sin² of the critical angle against the contact, (n/n_core)²; ∞ when the contact is as
    /// dense as the guide or denser (no total internal reflection there).
    sin2_critical: f64,
}

/// Mix a seed and an index into a new seed (one SplitMix64 step: add the golden-ratio increment
/// times the index, then the SplitMix64 finaliser), so that neighbouring indices give unrelated
/// seeds.
pub(crate) fn mix_seed(seed: u64, index: u64) -> u64 {
    let mut z = seed ^ index.wrapping_mul(0x9E37_79B9_7F4A_7C15);
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// The generator seed of ray `ray` (0-based within its batch) of batch `batch`: the seed mixed
/// with the batch index, then with the ray index. Every ray has its own stream, so a ray draws
/// the same numbers whatever the rays before it drew — two scenarios traced with the same seed
/// use the same random numbers ray by ray (common random numbers).
pub(crate) fn ray_seed(seed: u64, batch: u64, ray: u64) -> u64 {
    mix_seed(mix_seed(seed, batch), ray)
}

impl Prepared {
    /// Validate and prepare a scenario; the error lists the first problem.
    pub fn new(scenario: &Scenario) -> Result<Prepared, TirError> {
        let indices = scenario
            .check()
            .map_err(|mut v| TirError::Field(v.remove(0)))?;
        Ok(Self::from_checked(scenario, indices))
    }

    fn from_checked(scenario: &Scenario, indices: ScenarioIndices) -> Prepared {
        let route = PlacedRoute::new(scenario.guide.section, &scenario.route);
        let contacts = scenario
            .guide
            .contacts
            .iter()
            .zip(&indices.n_contacts)
            .map(|(c, &n)| ContactZone {
                place: c.place(),
                n,
                sin2_critical: if n < indices.n_core {
                    (n / indices.n_core) * (n / indices.n_core)
                } else {
                    f64::INFINITY
                },
            })
            .collect::<Vec<_>>();
        let mut segment_has_contact = vec![false; scenario.route.len()];
        for c in &contacts {
            segment_has_contact[c.place.segment] = true;
        }
        let coatings: Vec<CoatingZone> = scenario
            .guide
            .coatings
            .iter()
            .map(CoatingZone::new)
            .collect();
        let mut segment_has_coating = vec![false; scenario.route.len()];
        for c in &coatings {
            segment_has_coating[c.place.segment] = true;
        }
        // α in mm⁻¹ from dB/m: dB = 10 log10(e) αL ⇒ α = dB/m / (10 log10 e) / 1000.
        let alpha_per_mm =
            scenario.guide.attenuation_db_per_m / (10.0 * core::f64::consts::LOG10_E) / 1000.0;
        let sin_c_out = indices.n_out / indices.n_core;
        let ledger =
            Ledger::new(route.segments.len(), contacts.len()).with_coatings(coatings.len());
        let faces = walk::ShapedFaces::new(&scenario.guide, &route);
        let closed_form_run = route
            .segments
            .iter()
            .enumerate()
            .map(|(i, placed)| {
                let untapered =
                    matches!(placed.shape, Shape::Axial(a) if a.kw == 0.0 && a.kh == 0.0);
                // The entry pocket is looked for before every event in segment 0.
                let pocket = i == 0 && faces.pocket.is_some();
                untapered && !segment_has_contact[i] && !segment_has_coating[i] && !pocket
            })
            .collect();
        Prepared {
            source: SourceSampler::new(&scenario.source),
            alpha_per_mm,
            sin2_critical_out: sin_c_out * sin_c_out,
            contacts,
            segment_has_contact,
            coatings,
            segment_has_coating,
            closed_form_run,
            wall_split_factor: walk::WALL_SPLIT_FACTOR,
            entry_half: scenario.guide.section.half_sizes_mm(),
            entry_round: matches!(scenario.guide.section, Section::Round { .. }),
            exit_half: route.exit_section.half_sizes_mm(),
            ledger,
            faces,
            route,
            indices,
            scenario: scenario.clone(),
        }
    }

    /// The same scenario with every wall hit stepped one at a time, none taken in closed form
    /// a straight run at a time: the walk the closed form replaces, kept for the tests that
    /// compare the two (same seed, same budget within the intervals).
    #[doc(hidden)]
    pub fn stepping_every_hit(mut self) -> Prepared {
        self.closed_form_run.iter_mut().for_each(|c| *c = false);
        self
    }

    /// The same scenario with every side wall's Fresnel reflection below the critical angle
    /// drawn whole (the ray reflected with probability R, else leaving), and every coated
    /// zone's reflection too (sent back with probability ρ, else absorbed), not split in two:
    /// kept for the tests that compare the two (same answers within the intervals, the
    /// split's narrower).
    #[doc(hidden)]
    pub fn drawing_wall_reflections_whole(mut self) -> Prepared {
        self.wall_split_factor = 1.0;
        self
    }

    /// Number of batches for the scenario's ray count.
    pub fn batch_count(&self) -> u64 {
        self.scenario.trace.rays.div_ceil(BATCH_RAYS)
    }

    /// Trace batch `index` (0-based). Paths are recorded for the first `keep_paths` rays of
    /// batch 0, each up to [`path_points_each`] vertices.
    pub fn trace_batch(&self, index: u64, keep_paths: usize) -> Batch {
        self.trace_batch_inner(index, keep_paths, None, None)
    }

    /// [`Prepared::trace_batch`] (no paths kept), also writing each ray's delivered weight, in
    /// ray order, into `delivered` (cleared first). Two scenarios traced with the same seed draw
    /// the same random numbers ray by ray, so the differences of these per-ray weights estimate
    /// the change of the delivered share with far less noise than two independent runs
    /// ([`crate::stats::Estimate::of_differences`]).
    pub fn trace_batch_per_ray(&self, index: u64, delivered: &mut Vec<f64>) -> Batch {
        delivered.clear();
        self.trace_batch_inner(index, 0, Some(delivered), None)
    }

    /// [`Prepared::trace_batch`] (no paths kept), also writing each ray's delivered weight,
    /// leaked weight per segment and weight on the receiver, in ray order, into `rays` (cleared
    /// first). The batch and the random numbers are those of [`Prepared::trace_batch`]; the
    /// sweeps take paired differences of these (common random numbers).
    pub fn trace_batch_per_ray_all(&self, index: u64, rays: &mut RayTallies) -> Batch {
        rays.delivered.clear();
        rays.receiver.clear();
        rays.leaked.resize_with(self.route.segments.len(), Vec::new);
        rays.leaked.iter_mut().for_each(Vec::clear);
        self.trace_batch_inner_all(index, 0, None, None, Some(rays), 0)
    }

    fn trace_batch_inner(
        &self,
        index: u64,
        keep_paths: usize,
        delivered: Option<&mut Vec<f64>>,
        watched: Option<(usize, &mut Vec<RayFigures>)>,
    ) -> Batch {
        self.trace_batch_inner_all(index, keep_paths, delivered, watched, None, 0)
    }

    /// [`Prepared::trace_batch`] (no paths kept) with the same source points — every ray
    /// starts and heads as there — and its random events drawn afresh, the `draw`th time
    /// (`draw` 0 is [`Prepared::trace_batch`] itself): the event dimensions of each replicate's
    /// scrambled points, its exit schedule and each ray's own generator after its point are
    /// drawn from (seed, batch, replicate or ray, draw). Two draws of one batch share where the
    /// rays start and nothing else (beyond the generator's low bits of the event numbers, below
    /// 2⁻³²), so the covariance of their results over many seeds is the part of a result's
    /// variance that comes from the source points, Var(E[X | points]), the rest from the events
    /// (`examples/variance_parts.rs`).
    pub fn trace_batch_events_redrawn(&self, index: u64, draw: u64) -> Batch {
        self.trace_batch_inner_all(index, 0, None, None, None, draw)
    }

    fn trace_batch_inner_all(
        &self,
        index: u64,
        keep_paths: usize,
        mut delivered: Option<&mut Vec<f64>>,
        mut watched: Option<(usize, &mut Vec<RayFigures>)>,
        mut all: Option<&mut RayTallies>,
        events_draw: u64,
    ) -> Batch {
        let rays = self.scenario.trace.rays;
        let first = index * BATCH_RAYS;
        let count = rays.saturating_sub(first).min(BATCH_RAYS);
        let seed = self.scenario.trace.seed;
        let mut out = Batch::empty(self);
        // Each tally's per-ray contributions, summed shifted by the first ray's within each
        // replicate, and the replicates merged in order (see stats).
        let mut tallies = ShiftedSums::new(self.ledger.len());
        let mut receiver = ShiftedSums::new(1);
        out.tallies = vec![Estimate::default(); self.ledger.len()];
        let mut receiver_total = [Estimate::default()];
        let mut contrib = vec![0.0; self.ledger.len()];
        let points_each = path_points_each(keep_paths.min(count as usize));
        let mut scramble = Scramble::of(seed, index, 0).events_redrawn(events_draw);
        let mut exit_schedule = scramble.exit_schedule();
        for i in 0..count {
            let (replicate, in_replicate) = (i / REPLICATE_RAYS, i % REPLICATE_RAYS);
            if in_replicate == 0 && i > 0 {
                tallies.close_replicate(&mut out.tallies);
                receiver.close_replicate(&mut receiver_total);
                out.close_replicate(REPLICATE_RAYS);
                scramble = Scramble::of(seed, index, replicate).events_redrawn(events_draw);
                exit_schedule = scramble.exit_schedule();
            }
            contrib.iter_mut().for_each(|c| *c = 0.0);
            let rng = Pcg64Mcg::seed_from_u64(ray_seed(seed, index, i));
            let mut draws = RayDraws::new(&scramble, in_replicate as u32, rng, exit_schedule);
            if events_draw != 0 {
                draws.redraw_later(ray_seed(seed, index, i), events_draw);
            }
            let record = index == 0 && (i as usize) < keep_paths;
            let mut path = record.then(|| KeptPath::new(points_each));
            let mut watch = watched.as_ref().map(|&(segment, _)| Watch {
                segment,
                entered: None,
            });
            let (fate, on_receiver) = self.trace_ray(
                &mut draws,
                &mut contrib,
                &mut out,
                path.as_mut(),
                watch.as_mut(),
            );
            exit_schedule = draws.exit_schedule;
            out.route_leak.end_ray();
            out.route_coating.end_ray();
            self.ledger.fill_totals(&mut contrib);
            tallies.add(&contrib);
            if let Some(d) = delivered.as_deref_mut() {
                d.push(contrib[self.ledger.delivered()]);
            }
            if let (Some((segment, rays)), Some(watch)) = (watched.as_mut(), watch) {
                let leaked = if *segment < self.route.segments.len() {
                    contrib[self.ledger.leaked(*segment)]
                } else {
                    0.0
                };
                rays.push(RayFigures {
                    delivered: contrib[self.ledger.delivered()],
                    entered: watch.entered.unwrap_or(0.0),
                    leaked,
                });
            }
            receiver.add(&[on_receiver]);
            if let Some(all) = all.as_deref_mut() {
                all.delivered.push(contrib[self.ledger.delivered()]);
                for (s, leaked) in all.leaked.iter_mut().enumerate() {
                    leaked.push(contrib[self.ledger.leaked(s)]);
                }
                all.receiver.push(on_receiver);
            }
            if let Some(kept) = path {
                out.paths.push(Path {
                    fate,
                    points: kept.points,
                    cut_short: kept.cut_short,
                    parts_left: kept.parts_left,
                });
            }
        }
        let last = count - count.saturating_sub(1) / REPLICATE_RAYS * REPLICATE_RAYS;
        tallies.close_replicate(&mut out.tallies);
        receiver.close_replicate(&mut receiver_total);
        out.close_replicate(last);
        out.receiver = receiver_total[0];
        out.rays = count;
        out
    }

    /// [`Prepared::trace_batch`] (no paths kept), also writing, in ray order, each ray's
    /// delivered weight, its weight when it first entered route segment `segment` going forward
    /// (0 if it never did; 1 for segment 0, just inside the entry face) and the weight it leaked
    /// through that segment's side walls, into `rays` (cleared first). The batch and the random
    /// numbers are those of [`Prepared::trace_batch`]; a `segment` beyond the route gives
    /// zeros for the segment's figures. Used by the design studies' searches, which ask how
    /// much of the light entering a bend it leaks.
    pub fn trace_batch_watching(
        &self,
        index: u64,
        segment: usize,
        rays: &mut Vec<RayFigures>,
    ) -> Batch {
        rays.clear();
        self.trace_batch_inner(index, 0, None, Some((segment, rays)))
    }

    /// Trace every batch on the calling thread and merge them in order.
    pub fn trace_all_serial(&self, keep_paths: usize) -> Batch {
        let mut total = Batch::empty(self);
        for b in 0..self.batch_count() {
            total.merge(&self.trace_batch(b, keep_paths));
        }
        total
    }

    /// Trace every batch on `threads` threads (0: all cores) and merge them in batch order: the
    /// result is identical to [`Prepared::trace_all_serial`].
    #[cfg(not(target_arch = "wasm32"))]
    pub fn trace_all_parallel(&self, threads: usize, keep_paths: usize) -> Result<Batch, RunError> {
        self.trace_all_parallel_with_progress(threads, keep_paths, |_| {})
    }

    /// [`Prepared::trace_all_parallel`], calling `progress` with the rays done after each chunk.
    /// Fails with [`RunError::ThreadPool`] when the threads cannot be started.
    #[cfg(not(target_arch = "wasm32"))]
    pub fn trace_all_parallel_with_progress(
        &self,
        threads: usize,
        keep_paths: usize,
        mut progress: impl FnMut(u64),
    ) -> Result<Batch, RunError> {
        use rayon::prelude::*;
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map_err(|e| RunError::ThreadPool(e.to_string()))?;
        // Chunks of a few batches per thread, merged in order as they come, so memory stays
        // bounded however many rays are asked for.
        let chunk = 4 * pool.current_num_threads() as u64;
        let mut total = Batch::empty(self);
        let mut first = 0;
        while first < self.batch_count() {
            let end = (first + chunk).min(self.batch_count());
            let batches: Vec<Batch> = pool.install(|| {
                (first..end)
                    .into_par_iter()
                    .map(|b| self.trace_batch(b, keep_paths))
                    .collect()
            });
            for b in &batches {
                total.merge(b);
            }
            progress(total.rays);
            first = end;
        }
        Ok(total)
    }

    /// Whether a batch result has this scenario's shape (tallies, histograms, segments), so it
    /// can be merged and reported; batches read from outside (a worker) are checked with this.
    pub fn fits(&self, batch: &Batch) -> bool {
        let e = Batch::empty(self);
        batch.tallies.len() == e.tallies.len()
            && batch.wall_hits.len() == e.wall_hits.len()
            && same_bins(&batch.exit_map, &e.exit_map)
            && same_bins(&batch.angle_hist, &e.angle_hist)
            && same_bins(&batch.angular_map, &e.angular_map)
            && same_bins(&batch.far_field, &e.far_field)
            && same_bins(&batch.route_leak, &e.route_leak)
            && same_bins(&batch.receiver_map, &e.receiver_map)
            && same_bins(&batch.route_coating, &e.route_coating)
    }
}
