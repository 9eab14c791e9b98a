//! The 3D Monte Carlo tracer.
//!
//! Each ray starts on the emitter with unit weight. At the entry face it is Fresnel-reflected
//! (with probability R, unpolarised) or refracted in; inside, it is followed segment by segment
//! with exact wall intersections. At a side wall above the critical angle it is totally
//! reflected; below it, it is reflected with the Fresnel probability R or else leaves (leaked, or
//! lost into a contact zone). Bulk absorption (Beer–Lambert, P = P₀ e^(−αL)) lowers the weight
//! continuously and is tallied by segment. At the exit face the ray is Fresnel-reflected back or
//! delivered; rays reaching the entry face from inside may leave it (returned). Polarisation is
//! not carried: every Fresnel decision uses the unpolarised reflectance.
//!
//! Work is split into fixed batches of [`BATCH_RAYS`] rays whose generator seeds derive from
//! (seed, batch index); batches merge in index order, so a result does not depend on how many
//! threads or workers ran it. Transcendental functions come from `libm`, so native and wasm
//! give bit-identical results.

use glam::DVec3;
use rand_core::{Rng, SeedableRng};
use rand_pcg::Pcg64Mcg;
use serde::{Deserialize, Serialize};

use crate::error::TirError;
use crate::geometry::{Next, PlacedRoute};
use crate::interface::{fresnel_reflectance, reflect, refract};
use crate::scenario::{Flux, Scenario, ScenarioIndices, Section};
use crate::source::SourceSampler;
use crate::stats::{Estimate, Share};

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

/// Fixed tallies, in this order, followed by leaked per segment, absorbed per segment and lost
/// per contact zone.
const DELIVERED: usize = 0;
const MISSED: usize = 1;
const REFLECTED_ENTRY: usize = 2;
const RETURNED: usize = 3;
const STOPPED: usize = 4;
/// Totals over segments / zones, tallied per ray so that their confidence intervals are real
/// ones (not sums of half-widths). They duplicate the per-segment tallies: left out of the sum
/// that checks the budget.
const TOTAL_LEAKED: usize = 5;
const TOTAL_ABSORBED: usize = 6;
const TOTAL_CONTACT: usize = 7;
const FIXED: usize = 8;

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
    /// it left the guide).
    pub points: Vec<[f64; 3]>,
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
    contacts: Vec<ContactZone>,
    /// Whether any contact zone touches each segment (most wall hits need no zone look-up).
    segment_has_contact: Vec<bool>,
    entry_half: (f64, f64),
    entry_round: bool,
    exit_half: (f64, f64),
}

#[derive(Debug, Clone, Copy)]
struct ContactZone {
    segment: usize,
    from_mm: f64,
    to_mm: f64,
    from_deg: f64,
    to_deg: f64,
    n: f64,
    /// sin² of the critical angle against the contact, (n/n_core)²; ∞ when the contact is as
    /// dense as the guide or denser (no total internal reflection there).
    sin2_critical: f64,
}

/// A histogram of per-ray weights in which each ray lands in at most one bin: sums and sums of
/// squares, so that every bin has its own confidence interval.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Hist {
    /// Σ w per bin.
    pub sum: Vec<f64>,
    /// Σ w² per bin.
    pub sumsq: Vec<f64>,
}

impl Hist {
    fn new(bins: usize) -> Hist {
        Hist {
            sum: vec![0.0; bins],
            sumsq: vec![0.0; bins],
        }
    }

    #[inline]
    fn add(&mut self, bin: usize, w: f64) {
        self.sum[bin] += w;
        self.sumsq[bin] += w * w;
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
    }

    /// Share of the emitted power per bin and its 95 % half-width over `rays` rays:
    /// mean S/N, variance (Q − S²/N)/(N − 1), half-width 1.96 √(variance/N).
    pub fn shares(&self, rays: u64) -> (Vec<f64>, Vec<f64>) {
        let n = rays.max(1) as f64;
        let share = self.sum.iter().map(|s| s / n).collect();
        let ci = self
            .sum
            .iter()
            .zip(&self.sumsq)
            .map(|(s, q)| {
                if rays < 2 {
                    0.0
                } else {
                    let var = ((q - s * s / n) / (n - 1.0)).max(0.0);
                    1.96 * (var / n).sqrt()
                }
            })
            .collect();
        (share, ci)
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
    /// Leaked (and contact-lost) weight along the route, ROUTE_BINS bins.
    pub route_leak: Hist,
    /// Delivered weight that lands on the receiver.
    pub receiver: Estimate,
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
    fn empty(p: &Prepared) -> Batch {
        let nseg = p.route.segments.len();
        Batch {
            tallies: vec![Estimate::default(); FIXED + 2 * nseg + p.contacts.len()],
            exit_map: Hist::new(MAP_CELLS * MAP_CELLS),
            angle_hist: Hist::new(ANGLE_BINS),
            angular_map: Hist::new(ANGULAR_CELLS * ANGULAR_CELLS),
            route_leak: Hist::new(ROUTE_BINS),
            receiver: Estimate::default(),
            wall_interactions: 0,
            wall_hits: vec![0; nseg],
            rays: 0,
            paths: Vec::new(),
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
        self.route_leak.merge(&other.route_leak);
        self.receiver.merge(&other.receiver);
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

fn same_bins(a: &Hist, b: &Hist) -> bool {
    a.sum.len() == b.sum.len() && a.sumsq.len() == b.sumsq.len()
}

/// Folds batch results into one running total in batch order — the only order that reproduces
/// a single run bit for bit — holding only the batches that arrive ahead of their turn (from
/// several workers). Memory stays at one batch plus the early ones, however many rays.
#[derive(Debug, Clone, Default)]
pub struct PrefixMerger {
    total: Option<Batch>,
    next: u64,
    early: std::collections::BTreeMap<u64, Batch>,
}

impl PrefixMerger {
    /// An empty merger (nothing folded yet).
    pub fn new() -> PrefixMerger {
        PrefixMerger::default()
    }

    /// Keep batch `index` until its turn. A batch already folded is ignored.
    pub fn add(&mut self, index: u64, batch: Batch) {
        if index >= self.next {
            self.early.insert(index, batch);
        }
    }

    /// Fold batches up to `count` (exclusive) into the total; `None` while one of them is still
    /// missing, else the total of batches `0..folded()` (at least `count`, never more than
    /// asked for: batches beyond `count` wait).
    pub fn fold_to(&mut self, count: u64) -> Option<&Batch> {
        while self.next < count {
            let b = self.early.remove(&self.next)?;
            match &mut self.total {
                None => self.total = Some(b),
                Some(t) => t.merge(&b),
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

/// Mix a seed and a batch index into a generator seed (SplitMix64 finaliser).
fn batch_seed(seed: u64, batch: u64) -> u64 {
    let mut z = seed ^ batch.wrapping_mul(0x9E37_79B9_7F4A_7C15);
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

#[inline]
fn uniform(rng: &mut Pcg64Mcg) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
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
                segment: c.segment,
                from_mm: c.from_mm,
                to_mm: c.to_mm,
                from_deg: c.sector_from_deg,
                to_deg: c.sector_to_deg,
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
            segment_has_contact[c.segment] = true;
        }
        // α in mm⁻¹ from dB/m: dB = 10 log10(e) αL ⇒ α = dB/m / (10 log10 e) / 1000.
        let alpha_per_mm =
            scenario.guide.attenuation_db_per_m / (10.0 * core::f64::consts::LOG10_E) / 1000.0;
        Prepared {
            source: SourceSampler::new(&scenario.source),
            alpha_per_mm,
            contacts,
            segment_has_contact,
            entry_half: scenario.guide.section.half_sizes_mm(),
            entry_round: matches!(scenario.guide.section, Section::Round { .. }),
            exit_half: route.exit_section.half_sizes_mm(),
            route,
            indices,
            scenario: scenario.clone(),
        }
    }

    /// Number of batches for the scenario's ray count.
    pub fn batch_count(&self) -> u64 {
        self.scenario.trace.rays.div_ceil(BATCH_RAYS)
    }

    /// Trace batch `index` (0-based). Paths are recorded for the first `keep_paths` rays of
    /// batch 0.
    pub fn trace_batch(&self, index: u64, keep_paths: usize) -> Batch {
        let rays = self.scenario.trace.rays;
        let first = index * BATCH_RAYS;
        let count = rays.saturating_sub(first).min(BATCH_RAYS);
        let mut rng = Pcg64Mcg::seed_from_u64(batch_seed(self.scenario.trace.seed, index));
        let mut out = Batch::empty(self);
        let k = out.tallies.len();
        // Sums of (x − shift) and (x − shift)², shifted by the first ray's contribution, so a
        // tally on which every ray agrees has exactly zero variance.
        let mut sum = vec![0.0; k];
        let mut sumsq = vec![0.0; k];
        let mut shift = vec![0.0; k];
        let mut contrib = vec![0.0; k];
        let (mut rsum, mut rsumsq, mut rshift) = (0.0, 0.0, 0.0);
        for i in 0..count {
            contrib.iter_mut().for_each(|c| *c = 0.0);
            let record = index == 0 && (i as usize) < keep_paths;
            let mut path = if record {
                Some(Vec::with_capacity(16))
            } else {
                None
            };
            let (fate, on_receiver) =
                self.trace_ray(&mut rng, &mut contrib, &mut out, path.as_mut());
            let nseg = self.route.segments.len();
            contrib[TOTAL_LEAKED] = contrib[FIXED..FIXED + nseg].iter().sum();
            contrib[TOTAL_ABSORBED] = contrib[FIXED + nseg..FIXED + 2 * nseg].iter().sum();
            contrib[TOTAL_CONTACT] = contrib[FIXED + 2 * nseg..].iter().sum();
            if i == 0 {
                shift.copy_from_slice(&contrib);
                rshift = on_receiver;
            }
            for j in 0..k {
                let x = contrib[j] - shift[j];
                sum[j] += x;
                sumsq[j] += x * x;
            }
            let x = on_receiver - rshift;
            rsum += x;
            rsumsq += x * x;
            if let Some(points) = path {
                out.paths.push(Path { fate, points });
            }
        }
        for j in 0..k {
            out.tallies[j] = Estimate::from_shifted_sums(count, shift[j], sum[j], sumsq[j]);
        }
        out.receiver = Estimate::from_shifted_sums(count, rshift, rsum, rsumsq);
        out.rays = count;
        out
    }

    /// Trace one ray; per-tally contributions go to `contrib`, histograms to `out`. Returns the
    /// fate and the weight landing on the receiver.
    fn trace_ray(
        &self,
        rng: &mut Pcg64Mcg,
        contrib: &mut [f64],
        out: &mut Batch,
        mut path: Option<&mut Vec<[f64; 3]>>,
    ) -> (Fate, f64) {
        let ix = &self.indices;
        let segs = &self.route.segments;
        let nseg = segs.len();
        // Record a path vertex; the point is only computed when this ray's path is kept.
        macro_rules! rec {
            ($p:expr) => {
                if let Some(v) = path.as_deref_mut() {
                    v.push(($p).to_array());
                }
            };
        }
        let u = [uniform(rng), uniform(rng), uniform(rng), uniform(rng)];
        let (start, dir) = self.source.sample(u);
        rec!(start);
        // To the entry plane z = 0 through the gap.
        if dir.z <= 0.0 {
            rec!(start + 2.0 * dir);
            contrib[MISSED] = 1.0;
            return (Fate::Missed, 0.0);
        }
        let t = -start.z / dir.z;
        let hit = start + t * dir;
        let (hw, hh) = self.entry_half;
        let inside = if self.entry_round {
            hit.x * hit.x + hit.y * hit.y <= hw * hw
        } else {
            hit.x.abs() <= hw && hit.y.abs() <= hh
        };
        if !inside {
            rec!(hit);
            contrib[MISSED] = 1.0;
            return (Fate::Missed, 0.0);
        }
        rec!(hit);
        let cos_i = dir.z;
        if uniform(rng) < fresnel_reflectance(cos_i, ix.n_gap, ix.n_core) {
            rec!(hit + reflect(dir, DVec3::Z));
            contrib[REFLECTED_ENTRY] = 1.0;
            return (Fate::ReflectedEntry, 0.0);
        }
        // A gap medium denser than the guide (a high-index gel) can reflect totally.
        let Some(inward) = refract(dir, -DVec3::Z, ix.n_gap, ix.n_core) else {
            rec!(hit + reflect(dir, DVec3::Z));
            contrib[REFLECTED_ENTRY] = 1.0;
            return (Fate::ReflectedEntry, 0.0);
        };
        let mut seg = 0usize;
        let mut o = segs[0].frame.point_to_local(hit);
        let mut d = segs[0].frame.dir_to_local(inward);
        let mut w = 1.0f64;
        let cap = self.scenario.trace.max_interactions;
        let mut interactions = 0u32;
        let mut seg_path = 0.0f64;
        let sin_c_out = ix.n_out / ix.n_core;
        let sin_c2_out = sin_c_out * sin_c_out;
        loop {
            let placed = &segs[seg];
            let next = placed.next(o, d);
            let t = match next {
                Next::Wall { t, .. } | Next::Start { t } | Next::End { t } => t,
            };
            // Beer–Lambert: the path in this segment is summed and its attenuation applied once,
            // when the ray leaves the segment or ends (e^(−αL₁)·e^(−αL₂) = e^(−α(L₁+L₂))).
            seg_path += t;
            o += t * d;
            interactions += 1;
            // `absorb_last!` where the ray ends, `absorb!` where it goes on in another segment.
            macro_rules! absorb_last {
                () => {
                    if self.alpha_per_mm > 0.0 && seg_path > 0.0 {
                        let f = libm::exp(-self.alpha_per_mm * seg_path);
                        contrib[FIXED + nseg + seg] += w * (1.0 - f);
                        w *= f;
                    }
                };
            }
            macro_rules! absorb {
                () => {
                    absorb_last!();
                    seg_path = 0.0;
                };
            }
            if interactions > cap {
                absorb_last!();
                rec!(placed.frame.point_to_global(o));
                contrib[STOPPED] = w;
                return (Fate::Stopped, 0.0);
            }
            match next {
                Next::Wall { normal, .. } => {
                    out.wall_interactions += 1;
                    out.wall_hits[seg] += 1;
                    rec!(placed.frame.point_to_global(o));
                    let cos_i = d.dot(normal).clamp(0.0, 1.0);
                    let sin2_i = 1.0 - cos_i * cos_i;
                    // Contact zone at this point? (Only looked up on segments that have one.)
                    let mut zone = None;
                    if self.segment_has_contact[seg] {
                        let along = placed.along_mm(o);
                        let az = placed.azimuth_deg(o);
                        zone = self.contacts.iter().position(|c| {
                            c.segment == seg
                                && along >= c.from_mm
                                && along <= c.to_mm
                                && az >= c.from_deg
                                && az <= c.to_deg
                        });
                    }
                    let (n_out, sin2_critical) = match zone {
                        Some(z) => (self.contacts[z].n, self.contacts[z].sin2_critical),
                        None => (ix.n_out, sin_c2_out),
                    };
                    let tir = sin2_i > sin2_critical;
                    if tir || uniform(rng) < fresnel_reflectance(cos_i, ix.n_core, n_out) {
                        d = reflect(d, normal);
                        continue;
                    }
                    // Leaves the guide here.
                    absorb_last!();
                    let s = placed.s_start_mm + placed.along_mm(o);
                    let bin = ((s / self.route.length_mm) * ROUTE_BINS as f64) as usize;
                    out.route_leak.add(bin.min(ROUTE_BINS - 1), w);
                    let outside = refract(d, -normal, ix.n_core, n_out).unwrap_or(d);
                    rec!(placed.frame.point_to_global(o + 0.5 * outside));
                    return match zone {
                        Some(z) => {
                            contrib[FIXED + 2 * nseg + z] = w;
                            (Fate::Contact, 0.0)
                        }
                        None => {
                            contrib[FIXED + seg] = w;
                            (Fate::Leaked, 0.0)
                        }
                    };
                }
                Next::End { .. } if seg + 1 < nseg => {
                    absorb!();
                    let g = placed.frame.point_to_global(o);
                    let gd = placed.frame.dir_to_global(d);
                    seg += 1;
                    o = segs[seg].frame.point_to_local(g);
                    d = segs[seg].frame.dir_to_local(gd);
                }
                Next::Start { .. } if seg > 0 => {
                    absorb!();
                    let g = placed.frame.point_to_global(o);
                    let gd = placed.frame.dir_to_global(d);
                    seg -= 1;
                    o = segs[seg].frame.point_to_local(g);
                    d = segs[seg].frame.dir_to_local(gd);
                }
                Next::End { .. } => {
                    // Exit face, in the exit frame.
                    let ef = &self.route.exit_frame;
                    let g = placed.frame.point_to_global(o);
                    let gd = placed.frame.dir_to_global(d);
                    rec!(g);
                    let q = ef.point_to_local(g);
                    let ld = ef.dir_to_local(gd);
                    let cos_i = ld.z.clamp(0.0, 1.0);
                    if uniform(rng) < fresnel_reflectance(cos_i, ix.n_core, ix.n_exit) {
                        d = placed
                            .frame
                            .dir_to_local(ef.dir_to_global(reflect(ld, DVec3::Z)));
                        continue;
                    }
                    let od = refract(ld, -DVec3::Z, ix.n_core, ix.n_exit).unwrap_or(ld);
                    rec!(g + ef.dir_to_global(od) * self.exit_half.0.max(self.exit_half.1));
                    absorb_last!();
                    contrib[DELIVERED] = w;
                    self.record_delivery(q, od, w, out);
                    let on_receiver = match self.scenario.receiver {
                        Some(r) if od.z > 0.0 => {
                            let t = r.distance_mm / od.z;
                            if r.contains(q.x + t * od.x, q.y + t * od.y) {
                                w
                            } else {
                                0.0
                            }
                        }
                        _ => 0.0,
                    };
                    return (Fate::Delivered, on_receiver);
                }
                Next::Start { .. } => {
                    // Entry face from inside.
                    let g = placed.frame.point_to_global(o);
                    let gd = placed.frame.dir_to_global(d);
                    rec!(g);
                    let cos_i = (-gd.z).clamp(0.0, 1.0);
                    if uniform(rng) < fresnel_reflectance(cos_i, ix.n_core, ix.n_gap) {
                        d = placed.frame.dir_to_local(reflect(gd, DVec3::Z));
                        continue;
                    }
                    let od = refract(gd, DVec3::Z, ix.n_core, ix.n_gap).unwrap_or(gd);
                    rec!(g + od);
                    absorb_last!();
                    contrib[RETURNED] = w;
                    return (Fate::Returned, 0.0);
                }
            }
        }
    }

    fn record_delivery(&self, q: DVec3, od: DVec3, w: f64, out: &mut Batch) {
        let (hw, hh) = self.exit_half;
        let cell = |v: f64, half: f64, n: usize| {
            (((v + half) / (2.0 * half) * n as f64) as isize).clamp(0, n as isize - 1) as usize
        };
        out.exit_map.add(
            cell(q.y, hh, MAP_CELLS) * MAP_CELLS + cell(q.x, hw, MAP_CELLS),
            w,
        );
        let theta_deg = libm::acos(od.z.clamp(-1.0, 1.0)).to_degrees();
        out.angle_hist
            .add((theta_deg as usize).min(ANGLE_BINS - 1), w);
        out.angular_map.add(
            cell(od.y, 1.0, ANGULAR_CELLS) * ANGULAR_CELLS + cell(od.x, 1.0, ANGULAR_CELLS),
            w,
        );
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
    pub fn trace_all_parallel(&self, threads: usize, keep_paths: usize) -> Result<Batch, TirError> {
        self.trace_all_parallel_with_progress(threads, keep_paths, |_| {})
    }

    /// [`Prepared::trace_all_parallel`], calling `progress` with the rays done after each chunk.
    #[cfg(not(target_arch = "wasm32"))]
    pub fn trace_all_parallel_with_progress(
        &self,
        threads: usize,
        keep_paths: usize,
        mut progress: impl FnMut(u64),
    ) -> Result<Batch, TirError> {
        use rayon::prelude::*;
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map_err(|e| {
                TirError::Field(crate::error::FieldError::new("threads", e.to_string()))
            })?;
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
            && same_bins(&batch.route_leak, &e.route_leak)
    }

    /// Turn merged batches into the reported result.
    pub fn report(&self, batch: &Batch) -> TraceReport {
        let nseg = self.route.segments.len();
        let share = |j: usize| batch.tallies[j].share();
        let budget = Budget {
            delivered: share(DELIVERED),
            missed_entry: share(MISSED),
            reflected_entry: share(REFLECTED_ENTRY),
            leaked: share(TOTAL_LEAKED),
            contact: share(TOTAL_CONTACT),
            absorbed: share(TOTAL_ABSORBED),
            returned: share(RETURNED),
            stopped: share(STOPPED),
        };
        // The partition: every fate, and absorption by segment (the totals duplicate it).
        let budget_sum = batch
            .tallies
            .iter()
            .enumerate()
            .filter(|(j, _)| !(TOTAL_LEAKED..FIXED).contains(j))
            .map(|(_, e)| e.mean)
            .fold(0.0, |a, b| a + b);
        let segments = self
            .route
            .segments
            .iter()
            .zip(&self.scenario.route)
            .enumerate()
            .map(|(i, (p, seg))| SegmentReport {
                index: i,
                kind: match seg {
                    crate::scenario::Segment::Straight { .. } => "straight",
                    crate::scenario::Segment::Bend { .. } => "bend",
                    crate::scenario::Segment::Taper { .. } => "taper",
                },
                start_mm: p.s_start_mm,
                length_mm: p.length_mm,
                leaked: share(FIXED + i),
                absorbed: share(FIXED + nseg + i),
                wall_hits: batch.wall_hits[i],
            })
            .collect();
        let contacts = self
            .scenario
            .guide
            .contacts
            .iter()
            .enumerate()
            .map(|(k, c)| ContactReport {
                name: c.name.clone(),
                segment: c.segment,
                lost: share(FIXED + 2 * nseg + k),
            })
            .collect();
        TraceReport {
            rays: batch.rays,
            seed: self.scenario.trace.seed,
            n_core: self.indices.n_core,
            n_surroundings: self.indices.n_out,
            n_gap: self.indices.n_gap,
            n_exit: self.indices.n_exit,
            delivered: share(DELIVERED),
            budget,
            budget_sum,
            segments,
            contacts,
            receiver: self.scenario.receiver.map(|_| batch.receiver.share()),
            absolute: self.absolute(batch),
            wall_interactions: batch.wall_interactions,
            exit_map: Map::new(
                &batch.exit_map,
                batch.rays,
                MAP_CELLS,
                2.0 * self.exit_half.0,
                2.0 * self.exit_half.1,
            ),
            intensity: Intensity::from_hist(&batch.angle_hist, batch.rays),
            angular_map: Map::new(&batch.angular_map, batch.rays, ANGULAR_CELLS, 2.0, 2.0),
            leak_along_route: {
                let (share, ci95) = batch.route_leak.shares(batch.rays);
                RouteProfile {
                    bin_mm: self.route.length_mm / ROUTE_BINS as f64,
                    share,
                    ci95,
                }
            },
            paths: batch.paths.clone(),
        }
    }

    fn absolute(&self, batch: &Batch) -> Option<Absolute> {
        let flux = self.scenario.source.flux?;
        let (value, unit, intensity_unit) = match flux {
            Flux::Mw(x) => (x, "mW", "mW/sr"),
            Flux::Lm(x) => (x, "lm", "cd"),
        };
        let delivered = batch.tallies[DELIVERED].share();
        let intensity = Intensity::from_hist(&batch.angle_hist, batch.rays);
        // Share per steradian × flux; the peak is the brightest 1° ring.
        let peak_ring = (0..intensity.share_per_sr.len())
            .max_by(|&a, &b| intensity.share_per_sr[a].total_cmp(&intensity.share_per_sr[b]))
            .unwrap_or(0);
        let area_m2 = self.route.exit_section.area_mm2() * 1e-6;
        let with_ci = |share: f64, ci: f64| Value {
            value: share * value,
            ci95: ci * value,
        };
        let on_axis = with_ci(intensity.share_per_sr[0], intensity.ci95_per_sr[0]);
        Some(Absolute {
            unit,
            intensity_unit,
            delivered: with_ci(delivered.share, delivered.ci95),
            peak_intensity: with_ci(
                intensity.share_per_sr[peak_ring],
                intensity.ci95_per_sr[peak_ring],
            ),
            peak_angle_deg: intensity.angle_deg[peak_ring],
            on_axis_intensity: on_axis,
            mean_exit_luminance: (unit == "lm").then(|| Value {
                value: on_axis.value / area_m2,
                ci95: on_axis.ci95 / area_m2,
            }),
            receiver: self.scenario.receiver.map(|_| {
                let r = batch.receiver.share();
                with_ci(r.share, r.ci95)
            }),
        })
    }
}

/// The energy budget: shares of the emitted power, each with its 95 % half-width.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Budget {
    /// Left through the exit face.
    pub delivered: Share,
    /// Missed the entry face.
    pub missed_entry: Share,
    /// Fresnel-reflected at the entry face.
    pub reflected_entry: Share,
    /// Left through the side walls (all segments).
    pub leaked: Share,
    /// Lost into contact zones.
    pub contact: Share,
    /// Absorbed in the material.
    pub absorbed: Share,
    /// Left back through the entry face.
    pub returned: Share,
    /// Stopped by the interaction cap.
    pub stopped: Share,
}

/// Per-segment figures.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SegmentReport {
    /// Index in the route.
    pub index: usize,
    /// straight, bend or taper.
    pub kind: &'static str,
    /// Start along the route, mm.
    pub start_mm: f64,
    /// Centre-line length, mm.
    pub length_mm: f64,
    /// Share leaked through this segment's walls.
    pub leaked: Share,
    /// Share absorbed in this segment.
    pub absorbed: Share,
    /// Wall hits counted in this segment.
    pub wall_hits: u64,
}

/// Per-contact figures.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ContactReport {
    /// The contact's label.
    pub name: String,
    /// Segment it touches.
    pub segment: usize,
    /// Share lost into it.
    pub lost: Share,
}

/// A square map of delivered shares.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Map {
    /// Cells across and down.
    pub cells: usize,
    /// Width covered (mm for the exit face; direction-cosine span for the angular map).
    pub width_mm: f64,
    /// Height covered.
    pub height_mm: f64,
    /// Share of the emitted power per cell, row-major from −y to +y.
    pub share: Vec<f64>,
    /// 95 % half-width of each cell's share.
    pub ci95: Vec<f64>,
    /// Share per unit area of a cell (per mm² on the exit face: relative irradiance).
    pub share_per_area: Vec<f64>,
}

impl Map {
    fn new(h: &Hist, rays: u64, cells: usize, width_mm: f64, height_mm: f64) -> Map {
        let (share, ci95) = h.shares(rays);
        let cell_area = width_mm * height_mm / (cells * cells) as f64;
        let share_per_area = share.iter().map(|v| v / cell_area).collect();
        Map {
            cells,
            width_mm,
            height_mm,
            share,
            ci95,
            share_per_area,
        }
    }
}

/// Intensity against polar angle beyond the exit face.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Intensity {
    /// Bin centres, degrees.
    pub angle_deg: Vec<f64>,
    /// Share of the emitted power per steradian in each 1° ring.
    pub share_per_sr: Vec<f64>,
    /// 95 % half-width of each ring's value.
    pub ci95_per_sr: Vec<f64>,
}

impl Intensity {
    fn from_hist(hist: &Hist, rays: u64) -> Intensity {
        let (share, ci) = hist.shares(rays);
        let n = share.len();
        let mut angle_deg = Vec::with_capacity(n);
        let mut share_per_sr = Vec::with_capacity(n);
        let mut ci95_per_sr = Vec::with_capacity(n);
        for i in 0..n {
            let (a0, a1) = ((i as f64).to_radians(), ((i + 1) as f64).to_radians());
            let omega = std::f64::consts::TAU * (libm::cos(a0) - libm::cos(a1));
            angle_deg.push(i as f64 + 0.5);
            share_per_sr.push(share[i] / omega);
            ci95_per_sr.push(ci[i] / omega);
        }
        Intensity {
            angle_deg,
            share_per_sr,
            ci95_per_sr,
        }
    }
}

/// Leakage along the route.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RouteProfile {
    /// Bin width along the centre line, mm.
    pub bin_mm: f64,
    /// Share of the emitted power leaving the walls (or lost to contacts) in each bin.
    pub share: Vec<f64>,
    /// 95 % half-width of each bin's share.
    pub ci95: Vec<f64>,
}

/// An absolute figure with its 95 % half-width, in the unit its field names.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Value {
    /// The figure.
    pub value: f64,
    /// 95 % half-width.
    #[serde(deserialize_with = "crate::export::ci95_or_infinite")]
    pub ci95: f64,
}

/// Absolute figures when the source flux is given.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Absolute {
    /// Unit of flux: mW or lm.
    pub unit: &'static str,
    /// Unit of intensity: mW/sr or cd.
    pub intensity_unit: &'static str,
    /// Delivered flux.
    pub delivered: Value,
    /// Peak intensity beyond the exit face (brightest 1° ring).
    pub peak_intensity: Value,
    /// Angle from the exit axis of the brightest ring, degrees (its centre).
    pub peak_angle_deg: f64,
    /// Intensity along the exit axis (first 1° ring).
    pub on_axis_intensity: Value,
    /// Mean luminance of the exit face seen along its axis: on-axis intensity over the
    /// exit-face area, cd/m² (luminous input only).
    pub mean_exit_luminance: Option<Value>,
    /// Flux on the receiver.
    pub receiver: Option<Value>,
}

/// Everything a trace reports.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TraceReport {
    /// Rays traced.
    pub rays: u64,
    /// Seed used.
    pub seed: u64,
    /// Guide index at the wavelength (relative to air).
    pub n_core: f64,
    /// Surroundings' index.
    pub n_surroundings: f64,
    /// Index of the gap between source and entry face.
    pub n_gap: f64,
    /// Index beyond the exit face.
    pub n_exit: f64,
    /// Delivered share with its 95 % half-width.
    pub delivered: Share,
    /// The energy budget.
    pub budget: Budget,
    /// Sum of every tally's share (1 to rounding).
    pub budget_sum: f64,
    /// Per-segment figures.
    pub segments: Vec<SegmentReport>,
    /// Per-contact figures.
    pub contacts: Vec<ContactReport>,
    /// Share landing on the receiver.
    pub receiver: Option<Share>,
    /// Absolute figures.
    pub absolute: Option<Absolute>,
    /// Wall interactions traced.
    pub wall_interactions: u64,
    /// Exit-face irradiance map (share per cell).
    pub exit_map: Map,
    /// Intensity against angle.
    pub intensity: Intensity,
    /// 2D angular map over direction cosines.
    pub angular_map: Map,
    /// Leakage along the route.
    pub leak_along_route: RouteProfile,
    /// Sampled ray paths (left out of the JSON when none were asked for).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub paths: Vec<Path>,
}
