//! Where each ray starts on the emitter and where it heads: randomized quasi-Monte Carlo.
//!
//! The source draws four numbers per ray (two for the point on the emitting area, two for the
//! direction; [`crate::source::SourceSampler::sample`]). Instead of independent random numbers
//! they come from the Sobol sequence in four dimensions (I. M. Sobol', 1967, USSR Comput. Math.
//! Math. Phys. 7(4), 86–112; direction numbers of S. Joe and F. Y. Kuo, 2008, SIAM J. Sci.
//! Comput. 30, 2635–2654, as the `sobol_burley` crate tabulates them), randomized by Owen's
//! nested scrambling (A. B. Owen, 1995, "Randomly permuted (t,m,s)-nets and (t,s)-sequences",
//! Lecture Notes in Statistics 106, 299–317; here the hash-based form of B. Burley, 2020,
//! J. Computer Graphics Techniques 9(4), 1–20, which the crate computes):
//!
//! - each run of [`REPLICATE_RAYS`] consecutive rays of a batch (a *replicate*) takes the
//!   first [`REPLICATE_RAYS`] points of the sequence — a (t, m, 4)-net, spread over the four
//!   dimensions far more evenly than independent points — under its own scramble, drawn from
//!   (seed, batch, replicate);
//! - a scrambled point is uniform on [0, 1)⁴, so every ray is still an unbiased sample and
//!   every tally's mean is unbiased; the replicates are independent of one another, so the
//!   spread of their means gives an honest interval ([`crate::stats::Estimate::half_width95`]),
//!   while the rays within a replicate are not independent (that is where the lower variance
//!   comes from, Owen 1997, Annals of Statistics 25, 1541–1562);
//! - the sequence's 32 bits are filled out to 53 with the ray's own generator, so the numbers
//!   have the resolution the independent draws had;
//! - four more dimensions of the same point serve the ray's first four random events (a
//!   Fresnel draw at a wall or a face, a coating's, a textured face's; `RayDraws`): whichever
//!   events a ray meets first, each number is uniform and independent of the others, so every
//!   event stays unbiased, and the early events — a bend's first partial reflections, the exit
//!   face's — are spread as evenly as the source is (on the benchmark route this narrows
//!   delivered's interval by a further tenth: 1.2 times less variance). Later events draw from
//!   the ray's generator;
//! - the exit face's first Fresnel event of each ray (a flat or domed face's; a textured face's
//!   first facet, `rough::cross_first_decided`) is decided by the replicate's schedule
//!   (`ExitSchedule`, systematic sampling over the replicate's rays in order), which turns back
//!   within one ray of the number the reflectances add up to (on the benchmark route delivered's
//!   precision per second 1.18 times, what the exit face turns back by Fresnel reflection 4 times
//!   less variance). The ray still spends the number it would have drawn there.
//!
//! Everything is integer arithmetic (the crate's scalar path and exact conversions) or, in the
//! exit schedule, correctly rounded additions, so native and wasm give the same bits. A ray's
//! own random numbers still depend only on (seed, batch, ray): two scenarios traced with the
//! same seed share them ray by ray (common random numbers). The schedule also depends on the
//! rays before it in its replicate, so a ray whose fate a design change alters can shift the
//! exit face's decision for later rays of its replicate.

use rand_core::{Rng, SeedableRng};
use rand_pcg::Pcg64Mcg;
use sobol_burley::parts::{owen_scramble_rev, sobol_rev};

use super::mix_seed;
pub use crate::stats::REPLICATE_RAYS;

/// Set apart from the replicate, dimension-pair and ray seeds when mixing in a redraw's number
/// ([`Scramble::events_redrawn`], [`RayDraws::redraw_later`]).
const REDRAW_DOMAIN: u64 = 1 << 42;

/// Dimensions of a point: four for the source, [`EVENT_DIMS`] for the ray's first events.
const DIMS: usize = 4 + EVENT_DIMS;

/// The ray's first random events drawn from the scrambled point ([`RayDraws`]).
pub(super) const EVENT_DIMS: usize = 4;

/// The eight dimensions' scrambles of one replicate, and where its schedule of first exit-face
/// draws starts ([`ExitSchedule`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Scramble([u32; DIMS], f64);

/// Set apart from the ray indices (below 2³²) when mixing a replicate's index into a seed.
const REPLICATE_DOMAIN: u64 = 1 << 40;

/// Set apart from the dimension pairs' indices when mixing the schedule's start.
const SCHEDULE_DOMAIN: u64 = 1 << 41;

/// Systematic sampling of the first exit-face Fresnel events of a replicate's rays, in ray
/// order: one uniform start U per replicate; the k-th such event, of reflectance R_k, turns
/// its ray back iff an integer lies in (U + S_{k−1}, U + S_k], S_k = R_1 + … + R_k. A ray's
/// first arrival at the exit face, and so R_k, depends only on its own numbers drawn before,
/// never on U; so frac(U + S_{k−1}) is uniform and the ray is turned back with probability
/// exactly R_k — unbiased ray by ray — while the replicate turns back ⌊U + S⌋ of its rays, within
/// one of the expected number, where independent draws scatter by √(Σ R_k (1 − R_k)). The
/// replicates stay independent of one another (each its own U), so their spread still gives the
/// interval (W. G. Madow and L. H. Madow, 1944, "On the theory of systematic sampling, I",
/// Annals of Mathematical Statistics 15, 1–24; from memory).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct ExitSchedule(f64);

impl ExitSchedule {
    /// Whether the next first exit-face event, of reflectance `r` in [0, 1], turns its ray back.
    #[inline]
    pub fn turns_back(&mut self, r: f64) -> bool {
        // Certain events move nothing: R = 1 (total internal reflection) would add exactly one
        // turn, R = 0 none. (A NaN reflectance, were one ever computed, counts as 0 here, as the
        // plain draw `u < R` would, instead of spoiling the rest of the replicate.)
        if r >= 1.0 {
            return true;
        }
        if r.is_nan() || r <= 0.0 {
            return false;
        }
        let f = self.0 + r;
        if f >= 1.0 {
            // 1 ≤ f < 2 (both terms below 1), so f − 1 is exact and in [0, 1).
            self.0 = f - 1.0;
            true
        } else {
            self.0 = f;
            false
        }
    }
}

impl Scramble {
    /// The scramble of replicate `replicate` (0-based within the batch) of batch `batch`: the
    /// seed mixed with the batch index, then with the replicate index set apart from the ray
    /// indices, then once more for each further pair of dimensions (SplitMix64 output, which the
    /// hash-based scramble needs well mixed).
    pub fn of(seed: u64, batch: u64, replicate: u64) -> Scramble {
        let h = mix_seed(mix_seed(seed, batch), REPLICATE_DOMAIN + replicate);
        let mut s = [0u32; DIMS];
        let start = Self::fill(&mut s, h);
        Scramble(s, start)
    }

    /// Fill `words` two at a time from `h`, mixed once more for each further pair, and draw the
    /// schedule's start from the last seed used.
    fn fill(words: &mut [u32], mut h: u64) -> f64 {
        for (k, pair) in words.chunks_mut(2).enumerate() {
            if k > 0 {
                h = mix_seed(h, k as u64);
            }
            pair[0] = h as u32;
            pair[1] = (h >> 32) as u32;
        }
        (mix_seed(h, SCHEDULE_DOMAIN) >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// This replicate's scramble with its event dimensions and exit schedule drawn afresh, the
    /// `draw`th time (0: unchanged): the same source points, independent event numbers.
    pub fn events_redrawn(self, draw: u64) -> Scramble {
        if draw == 0 {
            return self;
        }
        let Scramble(mut s, _) = self;
        let h = mix_seed(
            u64::from(s[4]) | u64::from(s[5]) << 32,
            REDRAW_DOMAIN.wrapping_add(draw),
        );
        let start = Self::fill(&mut s[4..], h);
        Scramble(s, start)
    }

    /// The replicate's exit-face schedule, at its start.
    pub fn exit_schedule(&self) -> ExitSchedule {
        ExitSchedule(self.1)
    }

    /// Point `index` (0-based within the replicate, below [`REPLICATE_RAYS`]) in [0, 1)^8: the
    /// scrambled Sobol point's 32 bits per dimension, with 21 more from `rng` below them (an
    /// integer below 2⁵³ times 2⁻⁵³, exact, so every number is below 1).
    pub fn point(&self, index: u32, rng: &mut Pcg64Mcg) -> [f64; DIMS] {
        let rev = index.reverse_bits();
        let mut u = [0.0; DIMS];
        for (d, u) in u.iter_mut().enumerate() {
            let bits = owen_scramble_rev(sobol_rev(rev, d as u32), self.0[d]).reverse_bits();
            let low = rng.next_u64() >> 43;
            *u = ((u64::from(bits) << 21) | low) as f64 * (1.0 / (1u64 << 53) as f64);
        }
        u
    }
}

/// A ray's random numbers: the source's four ([`RayDraws::source`]), then one per random
/// event, the first [`EVENT_DIMS`] from its scrambled point, the rest from its own generator.
pub(super) struct RayDraws {
    source: [f64; 4],
    events: [f64; EVENT_DIMS],
    used: usize,
    rng: Pcg64Mcg,
    /// The replicate's exit-face schedule, as the rays before this one left it.
    pub exit_schedule: ExitSchedule,
}

impl RayDraws {
    /// Ray `index` of a replicate with scramble `scramble`, its generator `rng`.
    pub fn new(
        scramble: &Scramble,
        index: u32,
        mut rng: Pcg64Mcg,
        exit_schedule: ExitSchedule,
    ) -> RayDraws {
        let u = scramble.point(index, &mut rng);
        let mut source = [0.0; 4];
        let mut events = [0.0; EVENT_DIMS];
        source.copy_from_slice(&u[..4]);
        events.copy_from_slice(&u[4..]);
        RayDraws {
            source,
            events,
            used: 0,
            rng,
            exit_schedule,
        }
    }

    /// Draw the ray's later numbers (after its point's) from a generator of its own for the
    /// `draw`th redraw ([`super::Prepared::trace_batch_events_redrawn`]); `ray_seed` is the
    /// ray's usual generator seed.
    pub fn redraw_later(&mut self, ray_seed: u64, draw: u64) {
        self.rng = Pcg64Mcg::seed_from_u64(mix_seed(ray_seed, REDRAW_DOMAIN.wrapping_add(draw)));
    }

    /// The source's four numbers (point on the emitter, direction).
    pub fn source(&self) -> [f64; 4] {
        self.source
    }

    /// The next event's number, uniform in [0, 1).
    #[inline]
    pub fn uniform(&mut self) -> f64 {
        if let Some(&u) = self.events.get(self.used) {
            self.used += 1;
            return u;
        }
        (self.rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand_core::SeedableRng;

    /// Each replicate's points fill the unit cube evenly: with 256 points of a net in base 2,
    /// each of the 16 equal slabs of any one of the eight dimensions holds exactly 16 (every one-dimensional
    /// projection of a scrambled Sobol net is stratified), where independent points would
    /// scatter; and different replicates give different points.
    #[test]
    fn a_replicates_points_are_stratified_in_each_dimension() {
        let mut rng = Pcg64Mcg::seed_from_u64(3);
        for replicate in 0..3 {
            let s = Scramble::of(7, 2, replicate);
            let mut slabs = [[0u32; 16]; DIMS];
            for i in 0..REPLICATE_RAYS as u32 {
                let u = s.point(i, &mut rng);
                for (slab, u) in slabs.iter_mut().zip(u) {
                    assert!((0.0..1.0).contains(&u));
                    slab[(u * 16.0) as usize] += 1;
                }
            }
            for (d, slab) in slabs.iter().enumerate() {
                assert_eq!(*slab, [16; 16], "replicate {replicate}, dimension {d}");
            }
        }
        let a = Scramble::of(7, 2, 0).point(5, &mut Pcg64Mcg::seed_from_u64(1));
        let b = Scramble::of(7, 2, 1).point(5, &mut Pcg64Mcg::seed_from_u64(1));
        let c = Scramble::of(7, 3, 0).point(5, &mut Pcg64Mcg::seed_from_u64(1));
        assert!(a != b && a != c && b != c);
    }

    /// A redrawn replicate keeps its four source scrambles and takes new event scrambles and a
    /// new schedule start, another for each draw.
    #[test]
    fn a_redraw_keeps_the_source_dimensions_and_scrambles_the_events_afresh() {
        let s = Scramble::of(7, 2, 3);
        assert_eq!(s.events_redrawn(0), s);
        let (one, two) = (s.events_redrawn(1), s.events_redrawn(2));
        for r in [one, two] {
            assert_eq!(r.0[..4], s.0[..4], "the source's scrambles are kept");
            assert!(
                (4..DIMS).all(|d| r.0[d] != s.0[d]),
                "every event scramble is new"
            );
            assert!(
                r.1 != s.1 && (0.0..1.0).contains(&r.1),
                "a new schedule start"
            );
        }
        assert!((4..DIMS).all(|d| one.0[d] != two.0[d]) && one.1 != two.1);
        // A redrawn replicate's points: the source numbers those of the ordinary replicate (the
        // same generator for their low bits), every event number another.
        for i in 0..REPLICATE_RAYS as u32 {
            let u = s.point(i, &mut Pcg64Mcg::seed_from_u64(u64::from(i)));
            let v = one.point(i, &mut Pcg64Mcg::seed_from_u64(u64::from(i)));
            assert_eq!(u[..4], v[..4]);
            assert!(u[4..].iter().zip(&v[4..]).all(|(a, b)| a != b));
        }
    }

    /// A ray's draws after [`RayDraws::redraw_later`]: the same source numbers and first event
    /// numbers (the point's, drawn before), later numbers from a generator of the draw's own.
    #[test]
    fn a_redrawn_ray_draws_its_later_numbers_afresh() {
        let s = Scramble::of(3, 1, 2);
        let ray = |draw: u64| {
            let mut r = RayDraws::new(&s, 9, Pcg64Mcg::seed_from_u64(77), s.exit_schedule());
            if draw > 0 {
                r.redraw_later(77, draw);
            }
            let numbers: Vec<f64> = (0..EVENT_DIMS + 3).map(|_| r.uniform()).collect();
            (r.source(), numbers)
        };
        let (ordinary, one, two) = (ray(0), ray(1), ray(2));
        for redrawn in [&one, &two] {
            assert_eq!(redrawn.0, ordinary.0, "the source numbers are kept");
            assert_eq!(redrawn.1[..EVENT_DIMS], ordinary.1[..EVENT_DIMS]);
            assert!(redrawn.1[EVENT_DIMS..]
                .iter()
                .zip(&ordinary.1[EVENT_DIMS..])
                .all(|(a, b)| a != b));
        }
        assert!(one.1[EVENT_DIMS..]
            .iter()
            .zip(&two.1[EVENT_DIMS..])
            .all(|(a, b)| a != b));
    }

    /// Two dimensions at a time the points are stratified too: the first 256 Sobol points put
    /// one point in each of 16 × 16 squares for dimensions 0 and 1 (a (0, 8, 2)-net, from memory:
    /// the first two Sobol dimensions are a (0, 2)-sequence), and a scramble keeps it.
    #[test]
    fn the_first_two_dimensions_are_a_net() {
        let mut rng = Pcg64Mcg::seed_from_u64(9);
        let s = Scramble::of(1, 0, 4);
        let mut cells = [0u32; 256];
        for i in 0..REPLICATE_RAYS as u32 {
            let u = s.point(i, &mut rng);
            cells[(u[1] * 16.0) as usize * 16 + (u[0] * 16.0) as usize] += 1;
        }
        assert_eq!(cells, [1; 256]);
    }

    /// The padding below the sequence's 32 bits is the ray's own: its numbers differ only there.
    #[test]
    fn the_generator_fills_only_the_low_bits() {
        let s = Scramble::of(11, 0, 0);
        let a = s.point(17, &mut Pcg64Mcg::seed_from_u64(1));
        let b = s.point(17, &mut Pcg64Mcg::seed_from_u64(2));
        for (a, b) in a.iter().zip(b) {
            assert!(*a != b && (a - b).abs() < 1.0 / (1u64 << 32) as f64);
        }
    }

    /// The schedule turns back exactly as many rays as the reflectances add up to, within one,
    /// from any start; and each event is turned back with probability exactly its reflectance:
    /// over evenly spaced starts U = (j + ½)/M the events turned back at position k are those
    /// whose U lies in an arc of length R_k of the circle [0, 1), so their fraction is R_k
    /// within 1/M.
    #[test]
    fn the_exit_schedule_is_exact_in_count_and_unbiased_event_by_event() {
        let mut rng = Pcg64Mcg::seed_from_u64(21);
        // Reflectances as the exit face gives them: mostly a few per cent, some total (1), some
        // zero, and a few in between.
        let r: Vec<f64> = (0..300)
            .map(|k| match k % 7 {
                0 => 1.0,
                1 => 0.0,
                2 => (rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64,
                _ => 0.04 + 0.02 * ((rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64),
            })
            .collect();
        let total: f64 = r.iter().sum();
        const M: usize = 4000;
        let mut times = vec![0usize; r.len()];
        for j in 0..M {
            let mut schedule = ExitSchedule((j as f64 + 0.5) / M as f64);
            let mut count = 0usize;
            for (k, &rk) in r.iter().enumerate() {
                if schedule.turns_back(rk) {
                    count += 1;
                    times[k] += 1;
                }
                assert!((0.0..1.0).contains(&schedule.0));
            }
            assert!(
                (count as f64 - total).abs() < 1.0,
                "start {j}: {count} turned back, reflectances add up to {total}"
            );
        }
        for (k, (&rk, &n)) in r.iter().zip(&times).enumerate() {
            let fraction = n as f64 / M as f64;
            assert!(
                (fraction - rk).abs() <= 1.0 / M as f64 + 1e-12,
                "event {k}: turned back {fraction} of the time, R = {rk}"
            );
        }
        // Certain events leave the schedule where it was; a NaN reflectance turns nothing back
        // and does not spoil the events after it.
        let mut schedule = ExitSchedule(0.7);
        assert!(schedule.turns_back(1.0) && schedule.0 == 0.7);
        assert!(!schedule.turns_back(0.0) && schedule.0 == 0.7);
        assert!(!schedule.turns_back(f64::NAN) && schedule.0 == 0.7);
        assert!(schedule.turns_back(0.5) && (schedule.0 - 0.2).abs() < 1e-15);
        // Each replicate starts its schedule somewhere of its own.
        let starts: Vec<f64> = (0..4).map(|i| Scramble::of(3, 1, i).1).collect();
        assert!(starts.iter().all(|s| (0.0..1.0).contains(s)));
        assert!(starts.windows(2).all(|w| w[0] != w[1]));
    }

    /// A textured face's crossing keeps its law when the schedule decides its first facet's
    /// Fresnel reflection (as the exit face's first arrival does): over 40,000 crossings at each
    /// of three incidences and roughnesses the share transmitted agrees with the plain crossing's
    /// within four standard errors of their difference (the plain one's binomial spread, about
    /// 0.0015 here), and a reversed rule (the schedule's turn taken as a transmission) is far
    /// outside that. The schedule also turns back as often as the reflectances add up to, within
    /// one, over the events it was asked to decide.
    #[test]
    fn a_textured_crossing_keeps_its_law_under_the_schedule() {
        use crate::faces::rough::{cross, cross_first_decided, Crossing};
        use glam::DVec3;
        let mut rng = Pcg64Mcg::seed_from_u64(8);
        let mut u = move || (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64);
        const N: usize = 40_000;
        let through = |c: Crossing| matches!(c, Crossing::Transmitted(_)) as usize;
        for (theta_deg, alpha) in [(10.0, 0.4), (35.0, 0.4), (40.0, 0.1)] {
            let theta = f64::to_radians(theta_deg);
            let d = DVec3::new(libm::sin(theta), 0.0, -libm::cos(theta));
            let (n_i, n_t) = (1.49, 1.0);
            let mut schedule = ExitSchedule(0.37);
            let (mut asked, mut turned, mut sum_r) = (0usize, 0usize, 0.0);
            let (mut plain, mut scheduled, mut reversed) = (0, 0, 0);
            let mut reversed_schedule = ExitSchedule(0.37);
            for _ in 0..N {
                plain += through(cross(d, n_i, n_t, alpha, &mut u));
                let first = |r: f64| {
                    asked += 1;
                    sum_r += r;
                    let back = schedule.turns_back(r);
                    turned += back as usize;
                    back
                };
                scheduled += through(cross_first_decided(d, n_i, n_t, alpha, &mut u, first));
                let wrong = |r: f64| !reversed_schedule.turns_back(r);
                reversed += through(cross_first_decided(d, n_i, n_t, alpha, &mut u, wrong));
            }
            let share = |k: usize| k as f64 / N as f64;
            let p = share(plain);
            let se = (2.0 * p * (1.0 - p) / N as f64).sqrt();
            let gap = (share(scheduled) - p).abs();
            assert!(
                gap < 4.0 * se,
                "{theta_deg}°, α {alpha}: transmitted {} scheduled, {p} plain (4 SE = {})",
                share(scheduled),
                4.0 * se
            );
            assert!(
                (share(reversed) - p).abs() > 20.0 * se,
                "{theta_deg}°: the reversed rule"
            );
            assert!(asked > N / 2 && (turned as f64 - sum_r).abs() < 1.0);
        }
    }

    /// A ray's event numbers: its point's four event dimensions first, then its generator's.
    #[test]
    fn events_draw_the_points_dimensions_first() {
        let s = Scramble::of(5, 1, 2);
        let u = s.point(9, &mut Pcg64Mcg::seed_from_u64(4));
        let mut draws = RayDraws::new(&s, 9, Pcg64Mcg::seed_from_u64(4), s.exit_schedule());
        assert_eq!(draws.source(), [u[0], u[1], u[2], u[3]]);
        for k in 0..EVENT_DIMS {
            assert_eq!(draws.uniform(), u[4 + k]);
        }
        // Then the generator, after the point's padding draws.
        let mut rng = Pcg64Mcg::seed_from_u64(4);
        for _ in 0..DIMS {
            rng.next_u64();
        }
        let next = (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64);
        assert_eq!(draws.uniform(), next);
    }
}
