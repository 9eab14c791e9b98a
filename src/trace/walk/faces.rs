//! The walk through a shaped end face: a ray in the end cap of a domed or cut face
//! ([`crate::faces::cap`]), and a ray meeting a textured exit face ([`crate::faces::rough`]).
//!
//! In a cap the ray meets, one after the other, the face (Fresnel reflection, total beyond the
//! critical angle, else it leaves: delivered at the exit, returned at the entry), the side wall
//! carried on beyond the end plane (as a side wall of the route: reflected, or leaked from the
//! route's first or last segment) and the end plane (back into the route). Its path in the cap
//! is attenuated with the path in the neighbouring segment. Delivered light is put on the exit
//! map where it leaves the face seen along the exit axis (its x, y in the exit frame: the map
//! stays the end plane's), its direction on the intensity curves as for a flat face, and it
//! reaches the receiver (measured from the end plane) along a straight line from the face.

use glam::DVec3;

use super::{uniform, Ray, Step, Walk};
use crate::faces::cap::{Boundary, EndCap};
use crate::faces::outline::entry_face_frame;
use crate::faces::pocket::Pocket;
use crate::faces::rough::{self, Crossing};
use crate::faces::Face;
use crate::geometry::{Frame, Placed, PlacedRoute};
use crate::interface::{fresnel_amplitudes, fresnel_reflectance, reflect, refract};
use crate::scenario::Guide;
use crate::trace::{Fate, ROUTE_BINS};

/// The shaped faces of a prepared scenario: each end cap with its face frame (global), and the
/// textured exit face's roughness; `None` where the face is flat.
#[derive(Debug, Clone, Copy)]
pub(crate) struct ShapedFaces {
    /// The entry face's cap; its frame's z points from the entry plane towards the emitter.
    pub entry: Option<(Frame, EndCap)>,
    /// The exit face's cap, in the exit frame.
    pub exit: Option<(Frame, EndCap)>,
    /// The textured exit face's roughness α.
    pub exit_roughness: Option<f64>,
    /// The entry face's pocket over the LED.
    pub pocket: Option<Pocket>,
}

impl ShapedFaces {
    /// The faces of `guide` placed along `route`.
    pub fn new(guide: &Guide, route: &PlacedRoute) -> ShapedFaces {
        let entry_frame = entry_face_frame();
        ShapedFaces {
            entry: EndCap::new(guide.entry_face, guide.section).map(|c| (entry_frame, c)),
            exit: EndCap::new(guide.exit_face, route.exit_section).map(|c| (route.exit_frame, c)),
            exit_roughness: match guide.exit_face {
                Face::Textured { roughness } => Some(roughness),
                _ => None,
            },
            pocket: match guide.entry_face {
                Face::Pocket {
                    radius_mm,
                    depth_mm,
                } => Some(Pocket::new(radius_mm, depth_mm)),
                _ => None,
            },
        }
    }
}

/// Which end a cap is at.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum End {
    Entry,
    Exit,
}

/// z mirrored: between a face's frame and the frame of [`crate::faces::rough`] (z into the
/// medium the ray comes from).
fn flip(v: DVec3) -> DVec3 {
    DVec3::new(v.x, v.y, -v.z)
}

/// The ray's position (on the end plane: z = 0 exactly) and direction in a face frame.
fn face_coordinates(ray: &Ray, placed: &Placed, frame: &Frame) -> (DVec3, DVec3) {
    let g = placed.frame.point_to_global(ray.o);
    let gd = placed.frame.dir_to_global(ray.d);
    let mut o = frame.point_to_local(g);
    o.z = 0.0;
    (o, frame.dir_to_local(gd).normalize())
}

impl Walk<'_> {
    /// A ray from the emitter (global `start`, direction `dir` with dir.z > 0) meeting a shaped
    /// entry face: it misses the cap, is reflected where it meets it, or is refracted into it and
    /// walks through it into the first segment.
    pub(super) fn launch_into_cap(&mut self, start: DVec3, dir: DVec3) -> Result<Ray, Fate> {
        let p = self.p;
        let (frame, cap) = p.faces.entry.expect("an entry cap");
        let (o, d) = (frame.point_to_local(start), frame.dir_to_local(dir));
        let Some(hit) = cap.enter(o, d) else {
            self.trail.push(|| start + (-start.z / dir.z) * dir);
            return Err(self.end_outside(p.ledger.missed_entry(), Fate::Missed));
        };
        let at = o + hit.t * d;
        self.trail.push(|| frame.point_to_global(at));
        let ix = &p.indices;
        let cos_i = (-d.dot(hit.normal)).clamp(0.0, 1.0);
        // Split by expected value as the flat entry face (`Walk::entry_split`).
        let inward = refract(d, hit.normal, ix.n_gap, ix.n_core);
        let r = match inward {
            Some(_) => fresnel_reflectance(cos_i, ix.n_gap, ix.n_core),
            None => 1.0,
        };
        let entering = self.entry_split(r);
        let (Some(inward), true) = (inward, entering > 0.0) else {
            let back = reflect(d, hit.normal);
            self.trail.push(|| frame.point_to_global(at + back));
            return Err(self.end_outside(p.ledger.reflected_entry(), Fate::ReflectedEntry));
        };
        if let Some(w) = self.watch.as_deref_mut() {
            if w.segment == 0 && w.entered.is_none() {
                w.entered = Some(entering);
            }
        }
        let mut ray = Ray {
            seg: 0,
            o: DVec3::ZERO,
            d: DVec3::Z,
            w: entering,
            unabsorbed_mm: 0.0,
        };
        let placed = &p.route.segments[0];
        match self.walk_cap(End::Entry, &mut ray, placed, at, inward) {
            Step::Continue => Ok(ray),
            Step::End(fate, _) => Err(fate),
        }
    }

    /// A ray of the first segment reaching its start plane, into the entry cap.
    pub(super) fn enter_entry_cap(&mut self, ray: &mut Ray, placed: &Placed) -> Step {
        let (frame, _) = self.p.faces.entry.expect("an entry cap");
        let (o, d) = face_coordinates(ray, placed, &frame);
        self.walk_cap(End::Entry, ray, placed, o, d)
    }

    /// A ray of the last segment reaching its end plane, into the exit cap.
    pub(super) fn enter_exit_cap(&mut self, ray: &mut Ray, placed: &Placed) -> Step {
        let (frame, _) = self.p.faces.exit.expect("an exit cap");
        let (o, d) = face_coordinates(ray, placed, &frame);
        self.walk_cap(End::Exit, ray, placed, o, d)
    }

    /// A ray at face-frame point `o` with direction `d` inside the cap at `end`, `placed` being
    /// the route's segment there (the ray's segment): followed until it leaves the cap. Back
    /// through the end plane, the ray is handed to that segment ([`Step::Continue`]).
    fn walk_cap(
        &mut self,
        end: End,
        ray: &mut Ray,
        placed: &Placed,
        mut o: DVec3,
        mut d: DVec3,
    ) -> Step {
        let p = self.p;
        let (frame, cap) = match end {
            End::Entry => p.faces.entry,
            End::Exit => p.faces.exit,
        }
        .expect("a cap at this end");
        let ix = &p.indices;
        let n_beyond = match end {
            End::Entry => ix.n_gap,
            End::Exit => ix.n_exit,
        };
        let cap_steps = p.scenario.trace.max_interactions;
        for _ in 0..cap_steps {
            let hit = cap.leave(o, d);
            ray.unabsorbed_mm += hit.t;
            o += hit.t * d;
            let normal = hit.normal;
            let cos_i = d.dot(normal).clamp(0.0, 1.0);
            match hit.boundary {
                Boundary::EndPlane => {
                    let (g, gd) = (frame.point_to_global(o), frame.dir_to_global(d));
                    ray.o = placed.frame.point_to_local(g);
                    ray.d = placed.frame.dir_to_local(gd);
                    return Step::Continue;
                }
                Boundary::Side => {
                    self.out.wall_interactions += 1;
                    self.out.wall_hits[ray.seg] += 1;
                    self.trail.push(|| frame.point_to_global(o));
                    if 1.0 - cos_i * cos_i > p.sin2_critical_out {
                        d = reflect(d, normal);
                        continue;
                    }
                    // Below the critical angle the reflection is split in two as at the route's
                    // walls (`Walk::wall`).
                    let r = fresnel_reflectance(cos_i, ix.n_core, ix.n_out);
                    if self.reflected_at_wall(ray, r, None, || cap_side_bin(end)) {
                        d = reflect(d, normal);
                        continue;
                    }
                    return self.leave_cap_side(end, ray, &frame, o, d, normal);
                }
                Boundary::Face => {
                    self.trail.push(|| frame.point_to_global(o));
                    let first_w = (end == End::Exit && !self.reached_exit)
                        .then(|| self.weight_reaching_exit(ray));
                    if end == End::Exit {
                        self.reached_exit = true;
                    }
                    // The exit cap's first arrival is decided by the replicate's schedule,
                    // as the flat exit face's (`Walk::exit_reflects`).
                    let r = fresnel_reflectance(cos_i, ix.n_core, n_beyond);
                    if self.exit_reflects(first_w.is_some(), r) {
                        if let Some(w) = first_w {
                            let tir = fresnel_amplitudes(cos_i, ix.n_core, n_beyond).is_none();
                            self.turn_back(w, tir);
                        }
                        d = reflect(d, normal);
                        continue;
                    }
                    let od = refract(d, -normal, ix.n_core, n_beyond).unwrap_or(d);
                    self.trail.push(|| frame.point_to_global(o + od));
                    self.absorb(ray);
                    let ledger = p.ledger;
                    return match end {
                        End::Entry => {
                            self.end_inside(ledger.returned(), ledger.after_returned(), ray.w);
                            Step::End(Fate::Returned, 0.0)
                        }
                        End::Exit => {
                            self.end_inside(ledger.delivered(), ledger.after_delivered(), ray.w);
                            self.record_delivery(o, od, ray.w);
                            let on = self.on_receiver_from(o, od, ray.w);
                            Step::End(Fate::Delivered, on)
                        }
                    };
                }
            }
        }
        // The interaction cap, reached inside the cap.
        self.absorb(ray);
        let ledger = p.ledger;
        self.end_inside(ledger.stopped(), ledger.after_stopped(), ray.w);
        Step::End(Fate::Stopped, 0.0)
    }

    /// The ray leaves through the cap's side wall: leaked from the neighbouring segment, at the
    /// route's start or end on the leakage profile.
    fn leave_cap_side(
        &mut self,
        end: End,
        ray: &mut Ray,
        frame: &Frame,
        o: DVec3,
        d: DVec3,
        normal: DVec3,
    ) -> Step {
        let p = self.p;
        self.absorb(ray);
        self.out.route_leak.add_part(cap_side_bin(end), ray.w);
        self.trail.push(|| {
            let outside = refract(d, -normal, p.indices.n_core, p.indices.n_out).unwrap_or(d);
            frame.point_to_global(o + 0.5 * outside)
        });
        let ledger = p.ledger;
        let seg = ray.seg;
        self.end_inside(ledger.leaked(seg), ledger.after_leaked(seg), ray.w);
        Step::End(Fate::Leaked, 0.0)
    }

    /// A ray of weight `w` turned back on its first arrival at the exit face, totally (`tir`)
    /// or by Fresnel reflection.
    pub(super) fn turn_back(&mut self, w: f64, tir: bool) {
        let ledger = self.p.ledger;
        let by = if tir {
            ledger.turned_back_tir()
        } else {
            ledger.turned_back_fresnel()
        };
        self.contrib[ledger.turned_back()] = w;
        self.contrib[by] = w;
        self.turned_back_w = Some(w);
    }

    /// The weight `w` leaving the exit face at exit-frame point `q` (on the face, q.z ≥ 0) along
    /// `od` that lands on the receiver, whose plane is its distance beyond the end plane.
    fn on_receiver_from(&mut self, q: DVec3, od: DVec3, w: f64) -> f64 {
        match self.p.scenario.receiver {
            Some(r) if od.z > 0.0 => {
                let t = (r.distance_mm - q.z) / od.z;
                self.land_on_receiver(&r, q.x + t * od.x, q.y + t * od.y, w)
            }
            _ => 0.0,
        }
    }

    /// A ray of the last segment at its end plane meeting the textured exit face of roughness
    /// `alpha` ([`rough::cross`]): turned back into the guide, or delivered.
    pub(super) fn textured_exit(&mut self, ray: &mut Ray, placed: &Placed, alpha: f64) -> Step {
        let p = self.p;
        let ix = &p.indices;
        let ef = &p.route.exit_frame;
        let g = placed.frame.point_to_global(ray.o);
        let gd = placed.frame.dir_to_global(ray.d);
        self.trail.push(|| g);
        let q = ef.point_to_local(g);
        let ld = ef.dir_to_local(gd);
        let first_w = (!self.reached_exit).then(|| self.weight_reaching_exit(ray));
        self.reached_exit = true;
        // The first arrival's first facet is decided by the replicate's schedule, as the flat
        // exit face's (`Walk::exit_reflects`); the facet is the ray's own draw, known before.
        let mut schedule = self.rng.exit_schedule;
        let rng = &mut *self.rng;
        let crossing = if first_w.is_some() {
            let first = |r| schedule.turns_back(r);
            rough::cross_first_decided(
                flip(ld),
                ix.n_core,
                ix.n_exit,
                alpha,
                || uniform(rng),
                first,
            )
        } else {
            rough::cross(flip(ld), ix.n_core, ix.n_exit, alpha, || uniform(rng))
        };
        self.rng.exit_schedule = schedule;
        match crossing {
            Crossing::Reflected(r, tir) => {
                if let Some(w) = first_w {
                    self.turn_back(w, tir);
                }
                ray.d = placed.frame.dir_to_local(ef.dir_to_global(flip(r)));
                Step::Continue
            }
            Crossing::Transmitted(t) => {
                let od = flip(t);
                self.trail
                    .push(|| g + ef.dir_to_global(od) * p.exit_half.0.max(p.exit_half.1));
                self.absorb(ray);
                let ledger = p.ledger;
                self.end_inside(ledger.delivered(), ledger.after_delivered(), ray.w);
                self.record_delivery(q, od, ray.w);
                Step::End(Fate::Delivered, self.on_receiver(q, od, ray.w))
            }
        }
    }

    /// A ray starting inside the pocket (the LED sits in it) at global `start` along `dir`: it
    /// leaves through the mouth without meeting the pocket's surface (it missed the entry), or
    /// meets the surface and goes on as one arriving in the mouth.
    pub(super) fn launch_in_pocket(
        &mut self,
        pocket: &Pocket,
        start: DVec3,
        dir: DVec3,
    ) -> Result<Ray, Fate> {
        let (t, sphere) = pocket.leave(start, dir);
        if !sphere {
            self.trail.push(|| start + t * dir);
            self.trail.push(|| start + (t + 2.0) * dir);
            return Err(self.end_outside(self.p.ledger.missed_entry(), Fate::Missed));
        }
        self.launch_into_pocket(pocket, start, dir)
    }

    /// A ray from the emitter arriving in the pocket's mouth at global `hit` along `dir`: it
    /// enters the first segment through the pocket's surface, or leaves back through the mouth
    /// (reflected at the entry).
    pub(super) fn launch_into_pocket(
        &mut self,
        pocket: &Pocket,
        hit: DVec3,
        dir: DVec3,
    ) -> Result<Ray, Fate> {
        let p = self.p;
        match self.walk_pocket(pocket, hit, dir) {
            Some((at, inward)) => {
                if let Some(w) = self.watch.as_deref_mut() {
                    if w.segment == 0 && w.entered.is_none() {
                        w.entered = Some(1.0);
                    }
                }
                let first = &p.route.segments[0].frame;
                Ok(Ray {
                    seg: 0,
                    o: first.point_to_local(at),
                    d: first.dir_to_local(inward),
                    w: 1.0,
                    unabsorbed_mm: 0.0,
                })
            }
            None => Err(self.end_outside(p.ledger.reflected_entry(), Fate::ReflectedEntry)),
        }
    }

    /// A ray in the first segment (`placed`) whose next event is `t_next` away: when it meets
    /// the pocket's surface first, that event — reflected (totally or by Fresnel) back into the
    /// guide, or across the pocket and back into the guide or out of its mouth (returned).
    /// `None` when the pocket is not met first.
    pub(super) fn pocket_from_material(
        &mut self,
        pocket: &Pocket,
        ray: &mut Ray,
        placed: &Placed,
        t_next: f64,
    ) -> Option<Step> {
        let g = placed.frame.point_to_global(ray.o);
        let gd = placed.frame.dir_to_global(ray.d);
        let t = pocket.hit_from_material(g, gd).filter(|&t| t < t_next)?;
        ray.unabsorbed_mm += t;
        let at = g + t * gd;
        self.trail.push(|| at);
        let ix = &self.p.indices;
        let into_pocket = pocket.normal_into_pocket(at);
        let cos_i = gd.dot(into_pocket).clamp(0.0, 1.0);
        let across = if uniform(self.rng) < fresnel_reflectance(cos_i, ix.n_core, ix.n_gap) {
            None
        } else {
            refract(gd, -into_pocket, ix.n_core, ix.n_gap)
        };
        let Some(across) = across else {
            ray.o = placed.frame.point_to_local(at);
            ray.d = placed.frame.dir_to_local(reflect(gd, into_pocket));
            return Some(Step::Continue);
        };
        match self.walk_pocket(pocket, at, across) {
            Some((back, inward)) => {
                ray.o = placed.frame.point_to_local(back);
                ray.d = placed.frame.dir_to_local(inward);
                Some(Step::Continue)
            }
            None => {
                self.absorb(ray);
                let ledger = self.p.ledger;
                self.end_inside(ledger.returned(), ledger.after_returned(), ray.w);
                Some(Step::End(Fate::Returned, 0.0))
            }
        }
    }

    /// A ray in the pocket (the gap's medium) at global `o` along `d`, followed until it
    /// refracts into the guide through the pocket's surface (`Some((point, direction))`) or
    /// leaves through the mouth (`None`); at the surface it is Fresnel-reflected (totally,
    /// for a gap medium denser than the guide) or refracted. No bulk absorption in the pocket.
    fn walk_pocket(
        &mut self,
        pocket: &Pocket,
        mut o: DVec3,
        mut d: DVec3,
    ) -> Option<(DVec3, DVec3)> {
        let ix = &self.p.indices;
        for _ in 0..self.p.scenario.trace.max_interactions {
            let (t, sphere) = pocket.leave(o, d);
            o += t * d;
            self.trail.push(|| o);
            if !sphere {
                self.trail.push(|| o + d);
                return None;
            }
            let into_pocket = pocket.normal_into_pocket(o);
            let cos_i = (-d.dot(into_pocket)).clamp(0.0, 1.0);
            let inward = if uniform(self.rng) < fresnel_reflectance(cos_i, ix.n_gap, ix.n_core) {
                None
            } else {
                refract(d, into_pocket, ix.n_gap, ix.n_core)
            };
            match inward {
                Some(inward) => return Some((o, inward)),
                None => d = reflect(d, into_pocket),
            }
        }
        // Still in the pocket after the interaction cap: counted as leaving it.
        None
    }
}

/// The bin of the leakage along the route where light leaving a cap's side wall is put: the
/// route's first at the entry, its last at the exit.
fn cap_side_bin(end: End) -> usize {
    match end {
        End::Entry => 0,
        End::Exit => ROUTE_BINS - 1,
    }
}
