//! A ray's reflections along an untapered straight run in closed form: every wall hit before the
//! end plane the ray heads for, without stepping from hit to hit. Lengths in mm, angles in rad.
//!
//! **Round section** (a cylinder of radius a along local z). The wall is symmetric about the
//! axis, so once the ray has met it at P₁ (distance t₁ along the ray) every later hit is the one
//! before turned about the axis by the same central angle and moved along the axis by the same
//! step. With n₁ the outward unit normal at P₁ and d the unit direction there, the incoming
//! direction's radial component is v_r = d·n₁ = cos θ (θ the angle of incidence, the same at
//! every hit) and its tangential component v_t = (n₁ × d)·ẑ; the chord of the section the ray
//! draws makes the angle α with the tangent at its ends, tan α = v_r / |v_t| (so cos α = b/a,
//! b the chord's distance from the axis), and subtends the central angle 2α. With
//! s² = d_x² + d_y², hit j (0-based) is
//!
//! - at t_j = t₁ + j Δt, Δt = 2 a v_r / s² (the chord 2 a sin α crossed at speed s),
//! - at the point P₁ turned about z by φ_j = j · 2α · sign(v_t) and moved by j Δt d_z along z,
//!
//! and its normal and its incoming and outgoing directions are those of hit 0 turned by φ_j.
//! The one-hit turn's cosine and sine are rational in v_r, v_t (cos 2α = (v_t² − v_r²)/h²,
//! sin 2α = 2 v_r v_t / h², h² = v_r² + v_t²); a hit fewer than 16 turns on is turned by their
//! product (a few ε), one further by `libm`'s cosine and sine of φ_j itself, so the error does
//! not grow with j as an unbounded product of rotations would.
//!
//! **Rectangular section** (planes x = ±w, y = ±h). The two transverse coordinates fold
//! independently (a triangle wave): the hits on the x walls are at t = t_x + i · 2w / |d_x|
//! (t_x the first, i = 0, 1, …) with cos θ = |d_x|, d_x changing sign at each; those on the y
//! walls likewise with h and d_y. The hits of the run are the two sequences merged in time
//! order (an x wall first when both fall at once, as the stepping walk takes them).
//!
//! In both, the hits counted are those at t < t_end, t_end = (z_end − o_z)/d_z the distance to
//! the end plane the ray heads for (its path length along the run does not depend on the
//! reflections, which keep d_z). A ray square to the axis (d_z = 0) or one whose hits are
//! too many to count (spacing 0) has no count: [`StraightRun::hit_count`] is `None` and the
//! walk steps it instead, so its interaction cap still stops it.

use glam::DVec3;

use super::{Axial, Next};
use crate::interface::reflect;

/// The most hits a run is counted with; beyond it (a ray nearly square to the axis) there is no
/// count and the ray is stepped.
const MOST_HITS: f64 = 4.0e9;

/// One wall hit of a run, in time order.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RunHit {
    /// Distance along the ray from the run's start point, mm.
    pub t: f64,
    /// The family of walls hit: 0 for the round wall or the x walls, 1 for the y walls.
    pub family: usize,
    /// The hit's index within its family (0-based).
    pub index: u64,
    /// How many hits of the other family came before this one (rectangular only).
    pub other_before: u64,
}

/// The ray at a wall hit (local frame).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WallState {
    /// The point on the wall, mm.
    pub point: DVec3,
    /// The outward unit normal there.
    pub normal: DVec3,
    /// The unit direction arriving.
    pub d_in: DVec3,
    /// The unit direction after the reflection.
    pub d_out: DVec3,
}

/// The closed form of a ray's run through an untapered straight segment from local point `o`
/// with unit direction `d` (see the module's description).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StraightRun {
    o: DVec3,
    d: DVec3,
    /// Distance to the end plane the ray heads for (∞ when square to the axis), mm.
    t_end: f64,
    /// Whether that plane is the start plane z = 0 (going back).
    back: bool,
    /// That plane's z, mm.
    z_end: f64,
    /// How many hits before it (`None`: too many to count).
    count: Option<u64>,
    form: Form,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Form {
    /// A cylinder: hit 0 and the turn and step from one hit to the next.
    Round {
        /// Hit 0: distance, point, outward normal, direction after it.
        t0: f64,
        p0: DVec3,
        n0: DVec3,
        d0_out: DVec3,
        /// Distance between hits, mm.
        step_t: f64,
        /// The incoming direction's tangential component at hit 0 (its sign is the sense of
        /// the turn).
        v_t: f64,
        /// Cosine and sine of the central angle from one hit to the next, 2α signed.
        turn: (f64, f64),
        /// cos θ, θ the angle of incidence.
        cos_i: f64,
    },
    /// Four planes: per family (x, y), the first hit's distance, the spacing, the hit count,
    /// and the wall half-size.
    Rect {
        first_t: [f64; 2],
        step_t: [f64; 2],
        count: [u64; 2],
        half: [f64; 2],
    },
}

impl StraightRun {
    /// The run of the ray `o`, `d` (inside, or on the wall heading in) through `axial`, which must
    /// not taper (kw = kh = 0); `round` for a round section.
    pub fn new(axial: &Axial, round: bool, o: DVec3, d: DVec3) -> StraightRun {
        Self::with_end(axial, round, o, d, axial.end_planes(o, d))
    }

    /// [`StraightRun::new`] with the end plane the ray heads for already found
    /// (`axial.end_planes(o, d)`).
    pub fn with_end(axial: &Axial, round: bool, o: DVec3, d: DVec3, end: Next) -> StraightRun {
        debug_assert!(
            axial.kw == 0.0 && axial.kh == 0.0,
            "a closed-form run needs no taper"
        );
        let (t_end, back) = (end.t(), matches!(end, Next::Start { .. }));
        let (form, count) = if round {
            Self::round_form(axial, o, d, t_end)
        } else {
            Self::rect_form(axial, o, d, t_end)
        };
        StraightRun {
            o,
            d,
            t_end,
            back,
            z_end: if back { 0.0 } else { axial.length },
            count,
            form,
        }
    }

    /// Whether the ray along `d` in a round run crosses the section less than once on its way to
    /// the end plane it heads for, `t_end` away (its sideways travel under the diameter): then it meets the
    /// wall at most about twice, and the walk's steps find those hits for less than a run's
    /// set-up costs. Measured with the speed example against taking every run in closed form,
    /// twelve runs over four seeds: 1.10× the rays per second on a short pipe fed by a narrow
    /// beam (the soil sensor's example), the same within 2 % on the thermostat, the bike light
    /// and the benchmark route. (Stepping until the ray has crossed twice or four times: no
    /// better on the short pipe, 0.99× and 0.95× on the benchmark route. A rectangular run's
    /// planes cost little to set up: stepping its short runs was 0.97×, so they keep the
    /// closed form.)
    #[inline]
    pub fn few_hits(axial: &Axial, t_end: f64, d: DVec3) -> bool {
        let width = 2.0 * axial.hw0;
        t_end * t_end * (d.x * d.x + d.y * d.y) < width * width
    }

    fn round_form(axial: &Axial, o: DVec3, d: DVec3, t_end: f64) -> (Form, Option<u64>) {
        let Next::Wall { t: t0, normal: n0 } = axial.next_round(o, d) else {
            let none = Form::Round {
                t0: f64::INFINITY,
                p0: o,
                n0: DVec3::Z,
                d0_out: d,
                step_t: f64::INFINITY,
                v_t: 0.0,
                turn: (1.0, 0.0),
                cos_i: 0.0,
            };
            return (none, Some(0));
        };
        // Hit 0 exactly as a step of the walk finds it.
        let p0 = o + t0 * d;
        let d0_out = reflect(d, n0);
        let cos_i = d.dot(n0).clamp(0.0, 1.0);
        let v_t = n0.x * d.y - n0.y * d.x;
        let s2 = d.x * d.x + d.y * d.y;
        let step_t = 2.0 * axial.hw0 * cos_i / s2;
        // cos 2α and sin 2α from cos α = |v_t|/h, sin α = v_r/h (h² = v_r² + v_t²), signed
        // with v_t: exact to a few ε, no angle needed.
        let h2 = cos_i * cos_i + v_t * v_t;
        let turn = ((v_t * v_t - cos_i * cos_i) / h2, 2.0 * cos_i * v_t / h2);
        let count = count_from(t0, step_t, t_end);
        let form = Form::Round {
            t0,
            p0,
            n0,
            d0_out,
            step_t,
            v_t,
            turn,
            cos_i,
        };
        (form, count)
    }

    fn rect_form(axial: &Axial, o: DVec3, d: DVec3, t_end: f64) -> (Form, Option<u64>) {
        let half = [axial.hw0, axial.hh0];
        let mut first_t = [f64::INFINITY; 2];
        let mut step_t = [f64::INFINITY; 2];
        let mut count = [0u64; 2];
        for f in 0..2 {
            let (of, df) = (o[f], d[f]);
            if df == 0.0 {
                continue;
            }
            // The wall the ray heads for, as the walk's plane test finds it (never behind it).
            first_t[f] = ((half[f] - df.signum() * of) / df.abs()).max(0.0);
            step_t[f] = 2.0 * half[f] / df.abs();
            match count_from(first_t[f], step_t[f], t_end) {
                Some(c) => count[f] = c,
                None => {
                    let form = Form::Rect {
                        first_t,
                        step_t,
                        count,
                        half,
                    };
                    return (form, None);
                }
            }
        }
        let total = count[0].checked_add(count[1]);
        let form = Form::Rect {
            first_t,
            step_t,
            count,
            half,
        };
        (form, total)
    }

    /// How many wall hits come before the end plane; `None` when too many to count (a ray
    /// square to the axis, or hits with no spacing).
    pub fn hit_count(&self) -> Option<u64> {
        self.count
    }

    /// Distance from the start point to the end plane the ray heads for, mm (∞ when square to
    /// the axis).
    pub fn t_end(&self) -> f64 {
        self.t_end
    }

    /// Whether the ray heads for the start plane z = 0 (else the end plane z = length).
    pub fn heads_back(&self) -> bool {
        self.back
    }

    /// cos θ of the hits of `family` (θ the angle of incidence; 0 for the round wall or the
    /// x walls, 1 for the y walls): the same at every hit of the family.
    pub fn cos_incidence(&self, family: usize) -> f64 {
        match self.form {
            Form::Round { cos_i, .. } => cos_i,
            Form::Rect { .. } => self.d[family].abs(),
        }
    }

    /// The hits in time order (as many as [`StraightRun::hit_count`]; none when there is no
    /// count).
    pub fn hits(&self) -> RunHits<'_> {
        RunHits {
            run: self,
            next: [0, 0],
            left: self.count.unwrap_or(0),
        }
    }

    /// The ray at `hit` (one of [`StraightRun::hits`]).
    pub fn state(&self, hit: &RunHit) -> WallState {
        match self.form {
            Form::Round {
                p0,
                n0,
                d0_out,
                step_t,
                v_t,
                turn,
                cos_i,
                ..
            } => {
                if hit.index == 0 {
                    return WallState {
                        point: p0,
                        normal: n0,
                        d_in: self.d,
                        d_out: d0_out,
                    };
                }
                let j = hit.index as f64;
                let (c, s) = rotation(hit.index, turn, cos_i, v_t);
                let turn = |v: DVec3| DVec3::new(c * v.x - s * v.y, s * v.x + c * v.y, v.z);
                let mut point = turn(p0);
                point.z = p0.z + j * step_t * self.d.z;
                WallState {
                    point,
                    normal: turn(n0),
                    d_in: turn(self.d),
                    d_out: turn(d0_out),
                }
            }
            Form::Rect {
                first_t,
                step_t,
                half,
                ..
            } => {
                let f = hit.family;
                let g = 1 - f;
                let mut point = DVec3::ZERO;
                let mut d_in = self.d;
                // The family hit: on its wall, arriving with the sign the folds give it.
                let sign = self.d[f].signum() * alternate(hit.index);
                point[f] = sign * half[f];
                d_in[f] = sign * self.d[f].abs();
                // The other coordinate, folded `other_before` times by time t.
                let (x, v) = self.fold(g, hit.other_before, hit.t, first_t[g], step_t[g], half[g]);
                point[g] = x;
                d_in[g] = v;
                point.z = self.o.z + hit.t * self.d.z;
                let mut normal = DVec3::ZERO;
                normal[f] = sign;
                let mut d_out = d_in;
                d_out[f] = -d_in[f];
                WallState {
                    point,
                    normal,
                    d_in,
                    d_out,
                }
            }
        }
    }

    /// Coordinate `g` and its direction component at time `t`, after `folds` hits on its walls
    /// (the first at `first_t`, then every `step_t`; walls at ±`half`).
    fn fold(
        &self,
        g: usize,
        folds: u64,
        t: f64,
        first_t: f64,
        step_t: f64,
        half: f64,
    ) -> (f64, f64) {
        let (og, dg) = (self.o[g], self.d[g]);
        if folds == 0 {
            return (og + t * dg, dg);
        }
        let last = folds - 1;
        let wall = dg.signum() * alternate(last) * half;
        let v = -dg.signum() * alternate(last) * dg.abs();
        let t_last = first_t + last as f64 * step_t;
        (wall + (t - t_last) * v, v)
    }

    /// The last hit (`None` when there is none or no count): O(1), not by going through them.
    pub fn last_hit(&self) -> Option<RunHit> {
        let count = self.count.filter(|&c| c > 0)?;
        match self.form {
            Form::Round { t0, step_t, .. } => Some(RunHit {
                t: t0 + (count - 1) as f64 * step_t,
                family: 0,
                index: count - 1,
                other_before: 0,
            }),
            Form::Rect {
                first_t,
                step_t,
                count: per,
                ..
            } => {
                // The later of each family's last hit (the x family's when both fall at once,
                // as the merge orders them).
                let last = |f: usize| first_t[f] + (per[f].max(1) - 1) as f64 * step_t[f];
                let f = if per[0] == 0 || (per[1] > 0 && last(1) >= last(0)) {
                    1
                } else {
                    0
                };
                Some(RunHit {
                    t: last(f),
                    family: f,
                    index: per[f] - 1,
                    other_before: per[1 - f],
                })
            }
        }
    }

    /// The ray where it leaves its last hit (its start when there is none): point, direction
    /// (local) and the distance from the start point, mm. `None` when there is no count.
    pub fn after_hits(&self) -> Option<(DVec3, DVec3, f64)> {
        self.count?;
        Some(match self.last_hit() {
            Some(h) => {
                let s = self.state(&h);
                (s.point, s.d_out, h.t)
            }
            None => (self.o, self.d, 0.0),
        })
    }

    /// The ray arriving at the end plane it heads for, after all its hits: point and direction
    /// (local), and the distance from where it left its last hit (from the start point when
    /// none), computed as a step of the walk computes it from there. `None` when there is no
    /// count.
    pub fn end_arrival(&self) -> Option<(DVec3, DVec3, f64)> {
        let (o, d, _) = self.after_hits()?;
        let t = (self.z_end - o.z) / d.z;
        Some((o + t * d, d, t))
    }
}

/// Hits turned by fewer than this many central angles are turned by the product of the
/// one-hit rotation (error ≤ ~2j ε, bounded by 2·`PRODUCT_TURNS` ε); from it on by `libm`'s
/// cosine and sine of j · 2α (error independent of j).
const PRODUCT_TURNS: u64 = 16;

/// Cosine and sine of the turn of hit `j` (j times the one-hit turn, whose cosine and sine are
/// `turn`; tan α = `cos_i` / |`v_t`|, the turn 2α signed with `v_t`). A short run (the common
/// case: a few hits) needs no transcendental function.
#[inline]
fn rotation(j: u64, turn: (f64, f64), cos_i: f64, v_t: f64) -> (f64, f64) {
    if j < PRODUCT_TURNS {
        let (mut c, mut s) = (1.0, 0.0);
        for _ in 0..j {
            (c, s) = (c * turn.0 - s * turn.1, s * turn.0 + c * turn.1);
        }
        (c, s)
    } else {
        let turn_rad = (2.0 * libm::atan2(cos_i, v_t.abs())).copysign(v_t);
        let phi = j as f64 * turn_rad;
        (libm::cos(phi), libm::sin(phi))
    }
}

/// (−1)^i.
#[inline]
fn alternate(i: u64) -> f64 {
    if i % 2 == 0 {
        1.0
    } else {
        -1.0
    }
}

/// How many of t₀ + j Δt (j = 0, 1, …) lie below `t_end`: ⌈(t_end − t₀)/Δt⌉ when t₀ < t_end;
/// `None` when too many to count.
fn count_from(t0: f64, step_t: f64, t_end: f64) -> Option<u64> {
    if t0 >= t_end {
        return Some(0);
    }
    let q = (t_end - t0) / step_t;
    // Too many, infinite or NaN (no spacing): no count.
    if q.is_nan() || q > MOST_HITS {
        return None;
    }
    // ⌈q⌉ for 0 < q ≤ MOST_HITS (without a call to `ceil`), at least 1.
    let n = q as u64;
    Some(if (n as f64) < q { n + 1 } else { n.max(1) })
}

/// The hits of a [`StraightRun`] in time order.
#[derive(Debug, Clone)]
pub struct RunHits<'a> {
    run: &'a StraightRun,
    next: [u64; 2],
    left: u64,
}

impl Iterator for RunHits<'_> {
    type Item = RunHit;

    #[inline]
    fn next(&mut self) -> Option<RunHit> {
        if self.left == 0 {
            return None;
        }
        self.left -= 1;
        match self.run.form {
            Form::Round { t0, step_t, .. } => {
                let j = self.next[0];
                self.next[0] += 1;
                Some(RunHit {
                    t: t0 + j as f64 * step_t,
                    family: 0,
                    index: j,
                    other_before: 0,
                })
            }
            Form::Rect {
                first_t,
                step_t,
                count,
                ..
            } => {
                let time = |f: usize| {
                    if self.next[f] < count[f] {
                        first_t[f] + self.next[f] as f64 * step_t[f]
                    } else {
                        f64::INFINITY
                    }
                };
                let (tx, ty) = (time(0), time(1));
                let f = usize::from(ty < tx);
                let hit = RunHit {
                    t: if f == 0 { tx } else { ty },
                    family: f,
                    index: self.next[f],
                    other_before: self.next[1 - f],
                };
                self.next[f] += 1;
                Some(hit)
            }
        }
    }

    fn size_hint(&self) -> (usize, Option<usize>) {
        let n = usize::try_from(self.left).unwrap_or(usize::MAX);
        (n, usize::try_from(self.left).ok())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A round run is stepped when the ray crosses the section less than once before the end
    /// plane it heads for: along the axis, or slanted less than one diameter over the run; a
    /// steeper ray runs in closed form. The end plane counts from where the ray is, heading
    /// either way.
    #[test]
    fn few_hits_means_less_than_one_crossing() {
        let round = Axial {
            length: 10.0,
            hw0: 1.5,
            hh0: 1.5,
            kw: 0.0,
            kh: 0.0,
        };
        let few =
            |a: &Axial, o: DVec3, d: DVec3| StraightRun::few_hits(a, a.end_planes(o, d).t(), d);
        let o = DVec3::new(0.2, -0.1, 0.0);
        let slant = |sideways: f64| DVec3::new(sideways, 0.0, 1.0).normalize();
        assert!(few(&round, o, DVec3::Z));
        // 10 mm long, 3 mm wide: tan 0.29 crosses just under once, tan 0.31 just over.
        assert!(few(&round, o, slant(0.29)));
        assert!(!few(&round, o, slant(0.31)));
        // Heading back from 5 mm in: half the length to the start plane.
        let mid = DVec3::new(0.0, 0.0, 5.0);
        let back = |sideways: f64| DVec3::new(0.0, sideways, -1.0).normalize();
        assert!(few(&round, mid, back(0.59)));
        assert!(!few(&round, mid, back(0.61)));
        // Square to the axis: never reaches an end plane, so not few.
        assert!(!few(&round, o, DVec3::X));
    }

    /// The product of one-hit rotations (short runs) and libm's cosine and sine of j · 2α (long
    /// runs) agree where one hands over to the other, for skew, grazing and meridional rays.
    #[test]
    fn product_and_angle_turns_agree() {
        for (cos_i, v_t) in [
            (0.3, 0.5),
            (0.9, -0.1),
            (1e-4, 0.6),
            (0.7, 0.0),
            (0.02, -0.8),
        ] {
            let h2: f64 = cos_i * cos_i + v_t * v_t;
            let turn = ((v_t * v_t - cos_i * cos_i) / h2, 2.0 * cos_i * v_t / h2);
            let turn_rad = (2.0 * libm::atan2(cos_i, f64::abs(v_t))).copysign(v_t);
            for j in 0..PRODUCT_TURNS + 2 {
                let (c, s) = rotation(j, turn, cos_i, v_t);
                let phi = j as f64 * turn_rad;
                let (ca, sa) = (libm::cos(phi), libm::sin(phi));
                assert!(
                    (c - ca).abs() < 1e-14 && (s - sa).abs() < 1e-14,
                    "cos θ {cos_i}, v_t {v_t}, j {j}: ({c}, {s}) against ({ca}, {sa})"
                );
            }
        }
    }

    #[test]
    fn counts_are_ceilings() {
        assert_eq!(count_from(1.0, 2.0, 1.0), Some(0));
        assert_eq!(count_from(1.0, 2.0, 5.0), Some(2));
        assert_eq!(count_from(1.0, 2.0, 5.5), Some(3));
        assert_eq!(count_from(0.0, f64::INFINITY, 5.0), Some(1));
        assert_eq!(count_from(0.0, 0.0, 5.0), None);
        assert_eq!(count_from(0.0, 1.0, f64::INFINITY), None);
        assert_eq!(count_from(0.0, 1e-9, 5.0), None);
    }
}
