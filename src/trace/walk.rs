//! The walk of one ray through the guide.

use glam::DVec3;
use rand_core::Rng;
use rand_pcg::Pcg64Mcg;

use super::{Batch, Fate, Prepared, ANGLE_BINS, ANGULAR_CELLS, MAP_CELLS, ROUTE_BINS};
use crate::geometry::Next;
use crate::interface::{fresnel_reflectance, reflect, refract};

#[inline]
fn uniform(rng: &mut Pcg64Mcg) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

impl Prepared {
    /// Trace one ray; per-tally contributions go to `contrib`, histograms to `out`. Returns the
    /// fate and the weight landing on the receiver.
    pub(super) fn trace_ray(
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
            contrib[self.ledger.missed_entry()] = 1.0;
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
            contrib[self.ledger.missed_entry()] = 1.0;
            return (Fate::Missed, 0.0);
        }
        rec!(hit);
        let cos_i = dir.z;
        if uniform(rng) < fresnel_reflectance(cos_i, ix.n_gap, ix.n_core) {
            rec!(hit + reflect(dir, DVec3::Z));
            contrib[self.ledger.reflected_entry()] = 1.0;
            return (Fate::ReflectedEntry, 0.0);
        }
        // A gap medium denser than the guide (a high-index gel) can reflect totally.
        let Some(inward) = refract(dir, -DVec3::Z, ix.n_gap, ix.n_core) else {
            rec!(hit + reflect(dir, DVec3::Z));
            contrib[self.ledger.reflected_entry()] = 1.0;
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
                        contrib[self.ledger.absorbed(seg)] += w * (1.0 - f);
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
                contrib[self.ledger.stopped()] = w;
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
                            contrib[self.ledger.contact(z)] = w;
                            (Fate::Contact, 0.0)
                        }
                        None => {
                            contrib[self.ledger.leaked(seg)] = w;
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
                    contrib[self.ledger.delivered()] = w;
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
                    contrib[self.ledger.returned()] = w;
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
}
