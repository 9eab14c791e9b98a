//! The walk of one ray through the guide, one function per event: the launch across the gap,
//! the entry face, a side wall, an end plane into the neighbouring segment, the exit face, the
//! entry face met from inside, and the interaction cap.
//!
//! The cut into functions keeps every floating-point operation, its order and the order of the
//! random draws of the single loop it replaces: results are bit-identical.

use super::sequence::RayDraws;
use glam::DVec3;

use super::{
    receiver_map, Batch, Fate, PartLeft, Prepared, ANGLE_BINS, ANGULAR_CELLS, MAP_CELLS, ROUTE_BINS,
};
use crate::absorption::absorbed_and_kept;
use crate::geometry::{Next, Placed, Shape, StraightRun};
use crate::interface::{fresnel_amplitudes, fresnel_reflectance, reflect, refract};
use crate::scenario::{CoatingKind, Receiver};

mod faces;
pub(super) use faces::ShapedFaces;

/// The lightest part a flat or domed entry face's Fresnel event is split into
/// ([`Walk::entry_split`]): below it (an index-matching gel, R ≈ 0) the event is drawn. The
/// reflected part ends outside at once (a dome is convex, so what it reflects does not meet it
/// again; a pocket's concave surface may, so its events are drawn), so splitting costs nothing;
/// the floor only keeps the split from making many tiny tallies.
const ENTRY_SPLIT_LEAST: f64 = 1.0 / 64.0;

/// A side wall's Fresnel reflection below the critical angle, of probability R, is drawn with
/// probability q = min(1, `WALL_SPLIT_FACTOR`·R), the reflected ray carrying R/q of the weight
/// and the other 1 − R/q leaving through the wall there ([`Walk::wall`]). Twice R halves the
/// noise of the leak at that hit, for a few % fewer rays a second since more reflected rays go
/// on: on the benchmark route the leakiest bend's precision per second about 1.2 times higher,
/// delivered's unchanged (the README's performance section has the runs); three or eight times
/// R gained no more.
pub(super) const WALL_SPLIT_FACTOR: f64 = 2.0;

/// The lightest ray a side wall's partial reflection is split for ([`Walk::wall`]); a lighter one
/// draws the event whole, so a ray stops splitting once it has left fifteen sixteenths of its
/// weight behind (after four splits where R < ½, each halving it).
const WALL_SPLIT_LEAST: f64 = 1.0 / 16.0;

/// The lightest ray a coated zone's reflection is split for ([`Walk::coated_wall`]); a lighter
/// one draws it whole. Higher than a side wall's [`WALL_SPLIT_LEAST`]: a paint or metal of
/// ρ ≥ ½ sends every ray above it back, so a ray bouncing in a large painted zone would bounce
/// on until lighter than it, where drawn whole it would have been absorbed sooner. Measured
/// against the whole draw, the command line on one thread, four seeds: in a 20 mm rod
/// painted all round (ρ = 0.95), delivered's precision per second 1.07× and the paint's 1.24×
/// with ½, against 0.99× and 0.96× with 1/16 (0.42× the rays per second); on a bend with
/// metal or white paint on its back, no worse than with 1/16 (delivered 1.31–1.50×).
const COATING_SPLIT_LEAST: f64 = 0.5;

/// The ray's next event's uniform number in [0, 1) ([`RayDraws::uniform`]).
#[inline]
fn uniform(rng: &mut RayDraws) -> f64 {
    rng.uniform()
}

/// A kept path while its ray is traced: its vertices (global, mm), at most `max_points` of them
/// ([`super::path_points_each`]); a ray with more vertices is cut short there.
#[derive(Debug)]
pub(super) struct KeptPath {
    /// The vertices so far.
    pub points: Vec<[f64; 3]>,
    /// The most vertices kept.
    pub max_points: usize,
    /// Whether a vertex was left out.
    pub cut_short: bool,
    /// The parts of the ray's weight that left while the ray went on, at kept vertices.
    pub parts_left: Vec<PartLeft>,
}

impl KeptPath {
    /// An empty path keeping at most `max_points` vertices.
    pub fn new(max_points: usize) -> KeptPath {
        KeptPath {
            points: Vec::with_capacity(16.min(max_points)),
            max_points,
            cut_short: false,
            parts_left: Vec::new(),
        }
    }
}

/// The vertices of a kept path; for a ray whose path is not kept, or once its path is full,
/// nothing is recorded and the point is never computed.
struct Trail<'a>(Option<&'a mut KeptPath>);

impl Trail<'_> {
    #[inline]
    fn push(&mut self, point: impl FnOnce() -> DVec3) {
        if let Some(kept) = self.0.as_deref_mut() {
            if kept.points.len() < kept.max_points {
                kept.points.push(point().to_array());
            } else {
                kept.cut_short = true;
            }
        }
    }

    /// A part of weight `weight` (of the ray's launch weight 1) left for `fate` at the vertex
    /// pushed last (where every part leaves: the wall hit just pushed); not kept once the
    /// path is full.
    #[inline]
    fn part_left(&mut self, fate: Fate, weight: f64) {
        if let Some(kept) = self.0.as_deref_mut() {
            if !kept.cut_short && !kept.points.is_empty() {
                kept.parts_left.push(PartLeft {
                    vertex: (kept.points.len() - 1) as u32,
                    fate,
                    weight,
                });
            }
        }
    }
}

/// A ray inside the guide.
struct Ray {
    /// The segment it is in.
    seg: usize,
    /// Position in the segment's frame, mm.
    o: DVec3,
    /// Unit direction in the segment's frame.
    d: DVec3,
    /// Weight (1 at launch, lowered by absorption).
    w: f64,
    /// Path length in this segment whose attenuation is not applied yet, mm.
    unabsorbed_mm: f64,
}

/// Where a part of a ray's weight goes at a side wall ([`Walk::leave_part`]).
#[derive(Clone, Copy)]
enum PartTo {
    /// Out through the wall, leaked from the ray's segment.
    Leaked,
    /// Into contact zone k.
    Contact(usize),
    /// Absorbed by coated zone k.
    Coating(usize),
}

/// What follows an event.
enum Step {
    /// The ray goes on.
    Continue,
    /// The ray ends with this fate and this weight landing on the receiver.
    End(Fate, f64),
}

/// What became of a ray's run through an untapered straight in closed form
/// ([`Walk::straight_run`]).
enum Run {
    /// Not taken in closed form (too many hits for the interaction cap, or none to count): the
    /// walk steps it.
    Stepped,
    /// Its hits were all reflections; it now heads for this end plane from where it left the
    /// last (or from where it was).
    EndPlane(Next),
    /// It left through the wall at one of its hits.
    Left(Step),
}

/// One ray's walk: the prepared scenario, the ray's source numbers and random sequence, where the ray's
/// contributions (one per ledger column) and histogram entries go, and its kept path.
struct Walk<'a> {
    p: &'a Prepared,
    rng: &'a mut RayDraws,
    contrib: &'a mut [f64],
    out: &'a mut Batch,
    trail: Trail<'a>,
    /// The segment whose entering weight is asked for, if any (only the design studies ask).
    watch: Option<&'a mut Watch>,
    /// Whether the ray has reached the exit face yet.
    reached_exit: bool,
    /// The ray's weight when the exit face turned it back on its first arrival there, if it did:
    /// from then on each of its losses and its fate are also tallied as what became of
    /// turned-back light.
    turned_back_w: Option<f64>,
    /// The weight that has left the guide in parts since that turn back ([`Walk::leave_part`]).
    parted_since_turn: f64,
}

/// A segment watched during one ray's walk: the ray's weight when it first enters it going
/// forward (at the first crossing of its start plane from the segment before; for segment 0,
/// the weight just inside the entry face, 1).
#[derive(Debug, Clone, Copy)]
pub(super) struct Watch {
    /// The watched segment (route index).
    pub segment: usize,
    /// The weight on first entering it, if the ray did.
    pub entered: Option<f64>,
}

impl Prepared {
    /// Trace one ray, drawing its random numbers from `rng` (see [`super::sequence`]); per-tally
    /// contributions go to `contrib` (one per ledger column), histograms to `out`. Returns the
    /// fate and the weight landing on the receiver.
    pub(super) fn trace_ray(
        &self,
        rng: &mut RayDraws,
        contrib: &mut [f64],
        out: &mut Batch,
        path: Option<&mut KeptPath>,
        watch: Option<&mut Watch>,
    ) -> (Fate, f64) {
        let mut walk = Walk {
            p: self,
            rng,
            contrib,
            out,
            trail: Trail(path),
            watch,
            reached_exit: false,
            turned_back_w: None,
            parted_since_turn: 0.0,
        };
        let mut ray = match walk.launch() {
            Ok(ray) => ray,
            Err(fate) => return (fate, 0.0),
        };
        let segs = &self.route.segments;
        let cap = self.scenario.trace.max_interactions;
        let mut interactions = 0u32;
        loop {
            let placed = &segs[ray.seg];
            let next = if self.closed_form_run[ray.seg] {
                // An untapered straight: its wall hits in closed form, then the end plane.
                match walk.straight_run(&mut ray, placed, &mut interactions, cap) {
                    Run::Stepped => placed.next(ray.o, ray.d),
                    Run::EndPlane(next) => next,
                    Run::Left(Step::End(fate, on_receiver)) => return (fate, on_receiver),
                    Run::Left(Step::Continue) => continue,
                }
            } else {
                placed.next(ray.o, ray.d)
            };
            if let (0, Some(pocket)) = (ray.seg, &self.faces.pocket) {
                // The entry face's pocket, when the ray meets it before anything else.
                if let Some(step) = walk.pocket_from_material(pocket, &mut ray, placed, next.t()) {
                    interactions += 1;
                    let step = match step {
                        Step::Continue if interactions > cap => walk.stop(&mut ray, placed),
                        step => step,
                    };
                    if let Step::End(fate, on_receiver) = step {
                        return (fate, on_receiver);
                    }
                    continue;
                }
            }
            let t = match next {
                Next::Wall { t, .. }
                | Next::Start { t }
                | Next::End { t }
                | Next::Coated { t, .. } => t,
            };
            // Beer–Lambert: the path in this segment is summed and its attenuation applied once,
            // when the ray leaves the segment or ends (e^(−αL₁)·e^(−αL₂) = e^(−α(L₁+L₂))).
            ray.unabsorbed_mm += t;
            ray.o += t * ray.d;
            interactions += 1;
            let seg = ray.seg;
            let step = if interactions > cap {
                walk.stop(&mut ray, placed)
            } else {
                match next {
                    Next::Wall { normal, .. } => walk.wall(&mut ray, placed, normal),
                    Next::Coated {
                        normal,
                        reflectance,
                        ..
                    } => walk.coated(&mut ray, placed, normal, reflectance),
                    Next::End { .. } if seg + 1 < segs.len() => {
                        walk.cross(&mut ray, placed, seg + 1)
                    }
                    Next::Start { .. } if seg > 0 => walk.cross(&mut ray, placed, seg - 1),
                    Next::End { .. } => walk.exit_face(&mut ray, placed),
                    Next::Start { .. } => walk.entry_face_from_inside(&mut ray, placed),
                }
            };
            if let Step::End(fate, on_receiver) = step {
                return (fate, on_receiver);
            }
        }
    }

    /// The split of a side wall's Fresnel reflection below the critical angle, of reflectance
    /// `r`, for a ray of weight `w`: the probability q that the ray is reflected, and the share of
    /// its weight that then leaves there, 1 − r/q. q = min(1, 2r) ([`WALL_SPLIT_FACTOR`]); for a
    /// ray lighter than [`WALL_SPLIT_LEAST`], q = r and nothing leaves (the whole ray goes one
    /// way). Either way q (1 − share) = r: the weight reflected is the Fresnel one in
    /// expectation. Where q = 1 the walk draws no number (the ray is certainly reflected;
    /// [`Walk::reflected_at_wall`]).
    #[inline]
    fn wall_split(&self, w: f64, r: f64) -> (f64, f64) {
        self.split(w, r, WALL_SPLIT_LEAST)
    }

    /// The split of a coated zone's reflection of reflectance `r` for a ray of weight `w`, as
    /// [`Prepared::wall_split`]'s but drawn whole below [`COATING_SPLIT_LEAST`].
    #[inline]
    fn coating_split(&self, w: f64, r: f64) -> (f64, f64) {
        self.split(w, r, COATING_SPLIT_LEAST)
    }

    /// q = min(1, factor·r) and the share 1 − r/q for a ray of weight `w` at least `least`,
    /// else (r, 0).
    #[inline]
    fn split(&self, w: f64, r: f64, least: f64) -> (f64, f64) {
        let q = if w >= least {
            (self.wall_split_factor * r).min(1.0)
        } else {
            r
        };
        let leaving = if q > r { 1.0 - r / q } else { 0.0 };
        (q, leaving)
    }

    /// The bin of the leakage along the route ([`ROUTE_BINS`] over its length) of local point
    /// `o` on segment `placed`'s wall.
    #[inline]
    fn route_bin(&self, placed: &Placed, o: DVec3) -> usize {
        let s = placed.s_start_mm + placed.along_mm(o);
        (((s / self.route.length_mm) * ROUTE_BINS as f64) as usize).min(ROUTE_BINS - 1)
    }

    /// The contact zone at local point `o` on the wall of segment `seg`, if any (only looked up
    /// on segments that have one).
    #[inline]
    fn contact_zone(&self, seg: usize, placed: &Placed, o: DVec3) -> Option<usize> {
        if !self.segment_has_contact[seg] {
            return None;
        }
        let along = placed.along_mm(o);
        let az = placed.azimuth_deg(o);
        self.contacts
            .iter()
            .position(|c| c.place.segment == seg && c.place.holds(along, az))
    }
}

impl Walk<'_> {
    /// The weight `w` of a ray delivered at exit-frame point `q` with direction `od` that lands
    /// on the receiver (0 without one, or when it misses); put on the receiver's map.
    fn on_receiver(&mut self, q: DVec3, od: DVec3, w: f64) -> f64 {
        match self.p.scenario.receiver {
            Some(r) if od.z > 0.0 => {
                let t = r.distance_mm / od.z;
                self.land_on_receiver(&r, q.x + t * od.x, q.y + t * od.y, w)
            }
            _ => 0.0,
        }
    }

    /// The weight `w` arriving at (x, y) in the receiver's plane (mm from its centre) if that
    /// point is on the receiver, put on its map; else 0.
    fn land_on_receiver(&mut self, r: &Receiver, x: f64, y: f64, w: f64) -> f64 {
        if !r.contains(x, y) {
            return 0.0;
        }
        if let Some(o) = receiver_map::outline(r) {
            self.out.receiver_map.add(receiver_map::cell(&o, x, y), w);
        }
        w
    }

    /// Sample a start and direction on the emitter and cross the gap to the entry plane z = 0;
    /// the ray enters the guide or ends outside it (missed or reflected at the entry face).
    fn launch(&mut self) -> Result<Ray, Fate> {
        let p = self.p;
        let (start, dir) = p.source.sample(self.rng.source());
        self.trail.push(|| start);
        if let Some(pocket) = &p.faces.pocket {
            // An LED sitting in the pocket (validated to lie inside its sphere).
            if start.z > 0.0 {
                return self.launch_in_pocket(pocket, start, dir);
            }
        }
        if dir.z <= 0.0 {
            self.trail.push(|| start + 2.0 * dir);
            return Err(self.end_outside(p.ledger.missed_entry(), Fate::Missed));
        }
        if p.faces.entry.is_some() {
            return self.launch_into_cap(start, dir);
        }
        let t = -start.z / dir.z;
        let hit = start + t * dir;
        let (hw, hh) = p.entry_half;
        let inside = if p.entry_round {
            hit.x * hit.x + hit.y * hit.y <= hw * hw
        } else {
            hit.x.abs() <= hw && hit.y.abs() <= hh
        };
        self.trail.push(|| hit);
        if !inside {
            return Err(self.end_outside(p.ledger.missed_entry(), Fate::Missed));
        }
        if let Some(pocket) = &p.faces.pocket {
            if pocket.in_mouth(hit.x, hit.y) {
                return self.launch_into_pocket(pocket, hit, dir);
            }
        }
        self.entry_face(hit, dir)
    }

    /// The entry face at global point `hit`, met from the gap with direction `dir`: Fresnel
    /// reflection (unpolarised) or refraction into the first segment.
    fn entry_face(&mut self, hit: DVec3, dir: DVec3) -> Result<Ray, Fate> {
        let p = self.p;
        let ix = &p.indices;
        let cos_i = dir.z;
        // A gap medium denser than the guide (a high-index gel) can reflect totally.
        let inward = refract(dir, -DVec3::Z, ix.n_gap, ix.n_core);
        let r = match inward {
            Some(_) => fresnel_reflectance(cos_i, ix.n_gap, ix.n_core),
            None => 1.0,
        };
        let entering = self.entry_split(r);
        let (Some(inward), true) = (inward, entering > 0.0) else {
            self.trail.push(|| hit + reflect(dir, DVec3::Z));
            return Err(self.end_outside(p.ledger.reflected_entry(), Fate::ReflectedEntry));
        };
        let first = &p.route.segments[0].frame;
        if let Some(w) = self.watch.as_deref_mut() {
            if w.segment == 0 && w.entered.is_none() {
                w.entered = Some(entering);
            }
        }
        Ok(Ray {
            seg: 0,
            o: first.point_to_local(hit),
            d: first.dir_to_local(inward),
            w: entering,
            unabsorbed_mm: 0.0,
        })
    }

    /// The weight with which a ray from the emitter enters through an entry face of reflectance
    /// `r` (1 for total reflection), by expected-value split: the reflected part R is tallied
    /// and the ray enters with 1 − R, so the light reflected at the entry adds no noise of its
    /// own; a part lighter than ENTRY_SPLIT_LEAST (or total reflection) is drawn instead, the
    /// whole ray going one way (0: reflected whole, for the caller to end).
    pub(super) fn entry_split(&mut self, r: f64) -> f64 {
        if r >= ENTRY_SPLIT_LEAST && 1.0 - r >= ENTRY_SPLIT_LEAST {
            self.contrib[self.p.ledger.reflected_entry()] = r;
            1.0 - r
        } else if r >= 1.0 || uniform(self.rng) < r {
            0.0
        } else {
            1.0
        }
    }

    /// A ray that never entered the guide: its whole weight goes to `column`.
    fn end_outside(&mut self, column: usize, fate: Fate) -> Fate {
        self.contrib[column] = 1.0;
        fate
    }

    /// A ray inside the guide ends with weight `w` (its absorption already tallied) in fate
    /// column `column`. After a turn back at the exit face its weight also goes to `after`, the
    /// same fate among what became of turned-back light, and the weight it lost since the turn
    /// other than in parts (w_turn − w − parted, never below 0) to absorbed after the turn: the
    /// turn-back breakdown of each ray sums to its turned-back weight.
    #[inline]
    fn end_inside(&mut self, column: usize, after: usize, w: f64) {
        self.contrib[column] += w;
        if let Some(w_turn) = self.turned_back_w {
            self.contrib[after] += w;
            self.contrib[self.p.ledger.after_absorbed()] =
                (w_turn - w - self.parted_since_turn).max(0.0);
        }
    }

    /// Weight `w` of a ray inside the guide (its absorption already tallied) goes to fate column
    /// `column` — the whole ray at its end, or a part that leaves while the rest goes on — and
    /// after a turn back at the exit face also to `after`.
    #[inline]
    fn part_inside(&mut self, column: usize, after: usize, w: f64) {
        self.contrib[column] += w;
        if self.turned_back_w.is_some() {
            self.contrib[after] += w;
            self.parted_since_turn += w;
        }
    }

    /// Apply the attenuation of the path in the current segment (Beer–Lambert, e^(−αL)) and
    /// tally what it takes as absorbed in that segment.
    #[inline]
    fn absorb(&mut self, ray: &mut Ray) {
        let alpha_per_mm = self.p.alpha_per_mm;
        if alpha_per_mm > 0.0 && ray.unabsorbed_mm > 0.0 {
            let (absorbed, kept) = absorbed_and_kept(alpha_per_mm * ray.unabsorbed_mm);
            self.contrib[self.p.ledger.absorbed(ray.seg)] += ray.w * absorbed;
            ray.w *= kept;
        }
        ray.unabsorbed_mm = 0.0;
    }

    /// The interaction cap is reached: the ray stops where it is.
    fn stop(&mut self, ray: &mut Ray, placed: &Placed) -> Step {
        self.absorb(ray);
        let o = ray.o;
        self.trail.push(|| placed.frame.point_to_global(o));
        let ledger = self.p.ledger;
        self.end_inside(ledger.stopped(), ledger.after_stopped(), ray.w);
        Step::End(Fate::Stopped, 0.0)
    }

    /// A side wall with outward unit normal `normal` (local): total internal reflection above
    /// the critical angle (against the surroundings or a contact zone), else a Fresnel
    /// reflection of probability R split in two: with probability q = min(1, 2R) the ray is
    /// reflected carrying R/q of its weight, the other 1 − R/q leaving through the wall here,
    /// else the whole ray leaves ([`WALL_SPLIT_FACTOR`]; a ray lighter than
    /// [`WALL_SPLIT_LEAST`] draws the event whole, q = R). Either way the weight reflected is R
    /// and the weight leaving 1 − R in expectation, so the tallies stay unbiased, and each ray's
    /// parts still sum to its weight; for R < ½ the leak at the hit has R(1 − 2R)/2 of the
    /// variance of a whole draw, R(1 − R), and for R ≥ ½ none (q = 1).
    #[inline]
    fn wall(&mut self, ray: &mut Ray, placed: &Placed, normal: DVec3) -> Step {
        let p = self.p;
        let ix = &p.indices;
        self.out.wall_interactions += 1;
        self.out.wall_hits[ray.seg] += 1;
        let o = ray.o;
        self.trail.push(|| placed.frame.point_to_global(o));
        if p.segment_has_coating[ray.seg] {
            if let Some(k) = super::zones::zone_at(&p.coatings, ray.seg, placed, ray.o) {
                return self.coated_wall(ray, placed, normal, k);
            }
        }
        let cos_i = ray.d.dot(normal).clamp(0.0, 1.0);
        let sin2_i = 1.0 - cos_i * cos_i;
        let zone = p.contact_zone(ray.seg, placed, ray.o);
        let (n_out, sin2_critical) = match zone {
            Some(z) => (p.contacts[z].n, p.contacts[z].sin2_critical),
            None => (ix.n_out, p.sin2_critical_out),
        };
        if sin2_i > sin2_critical {
            ray.d = reflect(ray.d, normal);
            return Step::Continue;
        }
        let r = fresnel_reflectance(cos_i, ix.n_core, n_out);
        let o = ray.o;
        if self.reflected_at_wall(ray, r, zone, || p.route_bin(placed, o)) {
            ray.d = reflect(ray.d, normal);
            return Step::Continue;
        }
        self.leave_through_wall(ray, placed, normal, n_out, zone)
    }

    /// A run through an untapered straight segment (no contact zone, no coating, no pocket)
    /// taken in closed form ([`StraightRun`]; stepped instead when the ray crosses a round
    /// section less than once, [`StraightRun::few_hits`]): each of its k wall hits is an
    /// interaction as [`Walk::wall`] makes it — total internal reflection when sin²θ exceeds
    /// sin²θc, else the Fresnel reflection split in two by a draw u < q, in hit order — with θ,
    /// and so R, the same for every hit of a family of walls (computed once). A part leaving at a hit leaves
    /// from there, its path attenuated up to it; a ray that leaves whole leaves at that hit with
    /// the state there; one that does not is left where it leaves its last hit, its path added,
    /// and the end plane it heads for is returned for the walk to meet as it always does. The
    /// cost is O(1) plus one uniform draw per hit below the critical angle (and a vertex per hit
    /// of a kept path).
    #[inline]
    fn straight_run(
        &mut self,
        ray: &mut Ray,
        placed: &Placed,
        interactions: &mut u32,
        cap: u32,
    ) -> Run {
        let Shape::Axial(axial) = &placed.shape else {
            return Run::Stepped;
        };
        let end = axial.end_planes(ray.o, ray.d);
        if placed.round && StraightRun::few_hits(axial, end.t(), ray.d) {
            return Run::Stepped;
        }
        let run = StraightRun::with_end(axial, placed.round, ray.o, ray.d, end);
        let Some(count) = run.hit_count() else {
            return Run::Stepped;
        };
        // The end plane is one more interaction: stepped when the cap would stop the ray here.
        if u64::from(*interactions) + count + 1 > u64::from(cap) {
            return Run::Stepped;
        }
        let p = self.p;
        let ix = &p.indices;
        let families = if placed.round { 1 } else { 2 };
        let (mut tir, mut r) = ([true; 2], [1.0; 2]);
        for f in 0..families {
            let cos_i = run.cos_incidence(f);
            tir[f] = 1.0 - cos_i * cos_i > p.sin2_critical_out;
            if !tir[f] {
                r[f] = fresnel_reflectance(cos_i, ix.n_core, ix.n_out);
            }
        }
        let seg = ray.seg;
        // `count` + interactions ≤ cap, a u32.
        let hits = count as u32;
        // The run's path already added to the ray's unattenuated path (up to a hit where a part
        // left), mm.
        let mut added_mm = 0.0;
        if tir[0] && tir[1] && self.trail.0.is_none() {
            // Every hit totally reflected and no path kept: nothing to do hit by hit.
            *interactions += hits;
            self.out.wall_interactions += count;
            self.out.wall_hits[seg] += count;
        } else {
            for hit in run.hits() {
                *interactions += 1;
                self.out.wall_interactions += 1;
                self.out.wall_hits[seg] += 1;
                self.trail
                    .push(|| placed.frame.point_to_global(run.state(&hit).point));
                let f = hit.family;
                if tir[f] {
                    continue;
                }
                ray.unabsorbed_mm += hit.t - added_mm;
                added_mm = hit.t;
                // A part that leaves, leaves from this hit; the ray goes on from the run's start.
                let bin = || p.route_bin(placed, run.state(&hit).point);
                if self.reflected_at_wall(ray, r[f], None, bin) {
                    continue;
                }
                let at = run.state(&hit);
                ray.o = at.point;
                ray.d = at.d_in;
                return Run::Left(self.leave_through_wall(ray, placed, at.normal, ix.n_out, None));
            }
        }
        if let Some((o, d, t)) = run.after_hits() {
            ray.unabsorbed_mm += t - added_mm;
            ray.o = o;
            ray.d = d;
        }
        Run::EndPlane(axial.end_planes(ray.o, ray.d))
    }

    /// A coated face with outward unit normal `normal` (local) and specular reflectance `r`:
    /// the ray is reflected with its weight times r; the coating absorbs the rest, tallied as
    /// absorbed in this segment (after the path's own attenuation is applied).
    fn coated(&mut self, ray: &mut Ray, placed: &Placed, normal: DVec3, r: f64) -> Step {
        self.out.wall_interactions += 1;
        self.out.wall_hits[ray.seg] += 1;
        let o = ray.o;
        self.trail.push(|| placed.frame.point_to_global(o));
        self.absorb(ray);
        let part = ray.w * (1.0 - r);
        self.contrib[self.p.ledger.absorbed(ray.seg)] += part;
        if part > 0.0 {
            self.trail.part_left(Fate::Coating, part);
        }
        ray.w *= r;
        ray.d = reflect(ray.d, normal);
        Step::Continue
    }

    /// A side wall with outward unit normal `normal` (local) inside coated zone `k`
    /// ([`super::zones`]): the path so far is attenuated, the weight on the ray's first arrival
    /// at the zone is tallied, then the coating sends the ray back (white paint: a Lambertian
    /// direction about the inward normal; metal: the mirror direction), its reflectance ρ or R
    /// split as a side wall's Fresnel reflection is ([`Prepared::wall_split`]): sent back with
    /// probability q = min(1, 2ρ) carrying ρ/q of the weight, the other 1 − ρ/q absorbed by
    /// the coating there; else the coating absorbs the whole ray. Both tallied to the zone. A
    /// paint or metal of ρ ≥ ½ thus always sends the ray back, lighter, and its absorption
    /// carries no noise of its own, until the ray is lighter than [`COATING_SPLIT_LEAST`], when
    /// it draws whole, which bounds the bounces in a zone.
    fn coated_wall(&mut self, ray: &mut Ray, placed: &Placed, normal: DVec3, k: usize) -> Step {
        self.absorb(ray);
        let ledger = self.p.ledger;
        // Weights are positive, so a zero column means the ray has not met the zone before.
        let reached = ledger.coating_reached(k);
        if self.contrib[reached] == 0.0 {
            self.contrib[reached] = ray.w;
        }
        let kind = self.p.coatings[k].kind;
        let (q, absorbed_share) = self.p.coating_split(ray.w, kind.reflectance());
        // Black (q = 0) and ρ ≥ ½ (q = 1) draw no number.
        if self.chance(q) {
            if absorbed_share > 0.0 {
                let bin = self.p.route_bin(placed, ray.o);
                self.leave_part(ray, bin, PartTo::Coating(k), absorbed_share);
            }
            ray.d = match kind {
                CoatingKind::WhitePaint { .. } => {
                    let (u1, u2) = (uniform(self.rng), uniform(self.rng));
                    super::zones::lambertian_direction(-normal, u1, u2)
                }
                CoatingKind::Metal { .. } | CoatingKind::Black => reflect(ray.d, normal),
            };
            return Step::Continue;
        }
        // Where along the route the coating took it, binned as the leakage is.
        let bin = self.p.route_bin(placed, ray.o);
        self.out.route_coating.add_part(bin, ray.w);
        self.end_inside(ledger.coating(k), ledger.after_coating(), ray.w);
        Step::End(Fate::Coating, 0.0)
    }

    /// A side wall's Fresnel reflection below the critical angle, of reflectance `r`, split in two
    /// ([`Prepared::wall_split`]): true when the ray is reflected, a part of its weight having
    /// left (lost into contact zone `zone`, else leaked; in bin `bin()` of the leakage along the
    /// route), false when the whole ray leaves. No number is drawn where the outcome is
    /// certain (q = 0 or 1, [`Walk::chance`]). Every side wall's event goes through here.
    #[inline]
    fn reflected_at_wall(
        &mut self,
        ray: &mut Ray,
        r: f64,
        zone: Option<usize>,
        bin: impl FnOnce() -> usize,
    ) -> bool {
        let (q, leaving) = self.p.wall_split(ray.w, r);
        if !self.chance(q) {
            return false;
        }
        if leaving > 0.0 {
            let to = zone.map_or(PartTo::Leaked, PartTo::Contact);
            self.leave_part(ray, bin(), to, leaving);
        }
        true
    }

    /// True with probability `q`, drawing a number only where the outcome is uncertain
    /// (0 < q < 1).
    #[inline]
    fn chance(&mut self, q: f64) -> bool {
        q >= 1.0 || (q > 0.0 && uniform(self.rng) < q)
    }

    /// A part `share` (0 < share < 1) of the ray's weight, its path so far attenuated, leaves
    /// at a side wall while the rest goes on: leaked from the ray's segment, lost into a contact
    /// zone, or absorbed by a coated zone (`to`), put in bin `bin` of the leakage along the route
    /// (or, for a coating, of what the coatings absorb along it) as a whole ray leaving is, and
    /// marked on a kept path.
    fn leave_part(&mut self, ray: &mut Ray, bin: usize, to: PartTo, share: f64) {
        self.absorb(ray);
        let part = ray.w * share;
        let ledger = self.p.ledger;
        let (column, after, fate) = match to {
            PartTo::Leaked => (
                ledger.leaked(ray.seg),
                ledger.after_leaked(ray.seg),
                Fate::Leaked,
            ),
            PartTo::Contact(z) => (ledger.contact(z), ledger.after_contact(), Fate::Contact),
            PartTo::Coating(k) => (ledger.coating(k), ledger.after_coating(), Fate::Coating),
        };
        match to {
            PartTo::Coating(_) => self.out.route_coating.add_part(bin, part),
            _ => self.out.route_leak.add_part(bin, part),
        }
        self.trail.part_left(fate, part);
        self.part_inside(column, after, part);
        // What leaves and what goes on sum to the weight the ray had, to rounding.
        ray.w -= part;
    }

    /// The ray leaves through the side wall into a medium of index `n_out`: leaked, or lost
    /// into contact zone `zone`; its weight is tallied along the route.
    fn leave_through_wall(
        &mut self,
        ray: &mut Ray,
        placed: &Placed,
        normal: DVec3,
        n_out: f64,
        zone: Option<usize>,
    ) -> Step {
        let p = self.p;
        self.absorb(ray);
        self.out
            .route_leak
            .add_part(p.route_bin(placed, ray.o), ray.w);
        let (o, d) = (ray.o, ray.d);
        self.trail.push(|| {
            let outside = refract(d, -normal, p.indices.n_core, n_out).unwrap_or(d);
            placed.frame.point_to_global(o + 0.5 * outside)
        });
        let ledger = p.ledger;
        match zone {
            Some(z) => {
                self.end_inside(ledger.contact(z), ledger.after_contact(), ray.w);
                Step::End(Fate::Contact, 0.0)
            }
            None => {
                let seg = ray.seg;
                self.end_inside(ledger.leaked(seg), ledger.after_leaked(seg), ray.w);
                Step::End(Fate::Leaked, 0.0)
            }
        }
    }

    /// An end plane shared with segment `into`: the path so far is attenuated and the ray is
    /// handed over in that segment's frame.
    #[inline]
    fn cross(&mut self, ray: &mut Ray, placed: &Placed, into: usize) -> Step {
        self.absorb(ray);
        let g = placed.frame.point_to_global(ray.o);
        let gd = placed.frame.dir_to_global(ray.d);
        if let Some(w) = self.watch.as_deref_mut() {
            if w.segment == into && into > ray.seg && w.entered.is_none() {
                w.entered = Some(ray.w);
            }
        }
        let to = &self.p.route.segments[into].frame;
        ray.seg = into;
        ray.o = to.point_to_local(g);
        ray.d = to.dir_to_local(gd);
        Step::Continue
    }

    /// The exit face, in the exit frame: turned back into the guide (by total internal
    /// reflection beyond the critical angle, else by Fresnel reflection with probability R), or
    /// delivered (refracted into the exit medium, tallied on the maps and the receiver). On the
    /// ray's first arrival its weight there is tallied as reaching the exit face, and as turned
    /// back by the one mechanism or the other when it is; that first arrival is decided by the
    /// replicate's schedule ([`super::sequence::ExitSchedule`]), later ones by the ray's own
    /// numbers.
    fn exit_face(&mut self, ray: &mut Ray, placed: &Placed) -> Step {
        let p = self.p;
        if p.faces.exit.is_some() {
            return self.enter_exit_cap(ray, placed);
        }
        if let Some(alpha) = p.faces.exit_roughness {
            return self.textured_exit(ray, placed, alpha);
        }
        let ix = &p.indices;
        let ef = &p.route.exit_frame;
        let g = placed.frame.point_to_global(ray.o);
        let gd = placed.frame.dir_to_global(ray.d);
        self.trail.push(|| g);
        let q = ef.point_to_local(g);
        let ld = ef.dir_to_local(gd);
        let cos_i = ld.z.clamp(0.0, 1.0);
        let first_w = (!self.reached_exit).then(|| self.weight_reaching_exit(ray));
        self.reached_exit = true;
        let r = fresnel_reflectance(cos_i, ix.n_core, ix.n_exit);
        let turned_back = self.exit_reflects(first_w.is_some(), r);
        if turned_back {
            if let Some(w) = first_w {
                // Total internal reflection exactly where the Fresnel amplitudes have no
                // transmitted wave (R = 1), else a Fresnel reflection.
                let tir = fresnel_amplitudes(cos_i, ix.n_core, ix.n_exit).is_none();
                self.turn_back(w, tir);
            }
            ray.d = placed
                .frame
                .dir_to_local(ef.dir_to_global(reflect(ld, DVec3::Z)));
            return Step::Continue;
        }
        let od = refract(ld, -DVec3::Z, ix.n_core, ix.n_exit).unwrap_or(ld);
        self.trail
            .push(|| g + ef.dir_to_global(od) * p.exit_half.0.max(p.exit_half.1));
        self.absorb(ray);
        let ledger = p.ledger;
        self.end_inside(ledger.delivered(), ledger.after_delivered(), ray.w);
        self.record_delivery(q, od, ray.w);
        Step::End(Fate::Delivered, self.on_receiver(q, od, ray.w))
    }

    /// Whether the exit face reflects a ray, of reflectance `r`, back into the guide: on the
    /// ray's `first` arrival by the replicate's schedule, later by the ray's own number. The first
    /// still spends the ray's number, so its later events draw as they would with its own draw.
    pub(super) fn exit_reflects(&mut self, first: bool, r: f64) -> bool {
        let u = uniform(self.rng);
        if first {
            self.rng.exit_schedule.turns_back(r)
        } else {
            u < r
        }
    }

    /// The ray's weight as it reaches the exit face for the first time, tallied as reaching it:
    /// its weight with the attenuation of the path not yet applied (Beer–Lambert, as
    /// [`Walk::absorb`] computes it, without applying it: the walk's figures stay as they are).
    fn weight_reaching_exit(&mut self, ray: &Ray) -> f64 {
        let alpha_per_mm = self.p.alpha_per_mm;
        let w = if alpha_per_mm > 0.0 && ray.unabsorbed_mm > 0.0 {
            ray.w * absorbed_and_kept(alpha_per_mm * ray.unabsorbed_mm).1
        } else {
            ray.w
        };
        self.contrib[self.p.ledger.reached_exit()] = w;
        w
    }

    /// The entry face met from inside: Fresnel reflection back into the guide, or the ray
    /// leaves into the gap (returned).
    fn entry_face_from_inside(&mut self, ray: &mut Ray, placed: &Placed) -> Step {
        if self.p.faces.entry.is_some() {
            return self.enter_entry_cap(ray, placed);
        }
        let ix = &self.p.indices;
        let g = placed.frame.point_to_global(ray.o);
        let gd = placed.frame.dir_to_global(ray.d);
        self.trail.push(|| g);
        let cos_i = (-gd.z).clamp(0.0, 1.0);
        if uniform(self.rng) < fresnel_reflectance(cos_i, ix.n_core, ix.n_gap) {
            ray.d = placed.frame.dir_to_local(reflect(gd, DVec3::Z));
            return Step::Continue;
        }
        self.trail.push(|| {
            let od = refract(gd, DVec3::Z, ix.n_core, ix.n_gap).unwrap_or(gd);
            g + od
        });
        self.absorb(ray);
        let ledger = self.p.ledger;
        self.end_inside(ledger.returned(), ledger.after_returned(), ray.w);
        Step::End(Fate::Returned, 0.0)
    }

    /// A delivered ray of weight `w` at exit-frame point `q` with direction `od` (beyond the
    /// exit face) on the exit map, the intensity curve, the angular map and the far-field map.
    fn record_delivery(&mut self, q: DVec3, od: DVec3, w: f64) {
        let (hw, hh) = self.p.exit_half;
        let cell = |v: f64, half: f64, n: usize| {
            (((v + half) / (2.0 * half) * n as f64) as isize).clamp(0, n as isize - 1) as usize
        };
        let out = &mut *self.out;
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
        out.far_field.add(crate::far_field::bin_of(od), w);
    }
}

#[cfg(test)]
mod tests {
    use super::{WALL_SPLIT_FACTOR, WALL_SPLIT_LEAST};
    use crate::scenario::Scenario;
    use crate::trace::Prepared;

    fn rod() -> Prepared {
        let doc = r#"{"version": 1,
            "guide": {"section": {"round": {"diameter_mm": 3.0}},
                      "material": {"library": "pmma"}, "surroundings": {"library": "air"}},
            "route": [{"straight": {"length_mm": 10.0}}],
            "source": {"emitter": {"led": {"area": {"disk": {"diameter_mm": 1.0}},
                       "pattern": "lambertian"}}, "wavelength_nm": 550, "gap_mm": 0.1}}"#;
        Prepared::new(&Scenario::from_json(doc).unwrap()).unwrap()
    }

    /// The split is unbiased by construction: the probability q of reflecting times the share
    /// the reflected ray keeps, 1 − leaving, is the Fresnel reflectance r, for every r and
    /// weight; q = min(1, 2r) for a ray at least 1/16 heavy, else the whole draw (q = r, nothing
    /// leaving); and the whole draw when asked for it.
    #[test]
    fn the_wall_split_keeps_the_fresnel_weight() {
        let split = rod();
        let whole = rod().drawing_wall_reflections_whole();
        let rs = [
            0.0, 1e-9, 0.003, 0.04, 0.2, 0.4999, 0.5, 0.61, 0.9, 0.999_999, 1.0,
        ];
        for r in rs {
            for w in [1.0, 0.7, WALL_SPLIT_LEAST, 0.99 * WALL_SPLIT_LEAST, 1e-3] {
                let (q, leaving) = split.wall_split(w, r);
                assert!((r..=1.0).contains(&q), "r {r}, w {w}: q {q}");
                assert!((0.0..1.0).contains(&leaving), "r {r}, w {w}: {leaving}");
                assert!(
                    (q * (1.0 - leaving) - r).abs() <= 2.0 * f64::EPSILON,
                    "r {r}, w {w}"
                );
                if w >= WALL_SPLIT_LEAST {
                    assert_eq!(q, (WALL_SPLIT_FACTOR * r).min(1.0), "r {r}, w {w}");
                } else {
                    assert_eq!((q, leaving), (r, 0.0), "r {r}, w {w}");
                }
                assert_eq!(whole.wall_split(w, r), (r, 0.0), "r {r}, w {w}");
            }
        }
    }
}
