//! Geometry of a routed guide: segments placed along the route, each with its own local frame,
//! and exact ray–wall and ray–end-plane intersections in that frame.
//!
//! Global frame: the entry face is centred at the origin, the guide starts along +z, its width
//! axis along +x and its height axis along +y. Lengths in mm.
//!
//! Layout: the placement of the route ([`route`]); one file per shape, each with its own walls
//! and end planes — a straight or taper ([`axial`]: cone or cylinder when round, four planes when
//! rectangular), a bend ([`bend`]: its end planes and position along it), whose walls are a torus
//! when round ([`torus`]) or two cylinders and two planes when rectangular ([`rect_bend`]); the
//! shared ray–quadric helpers (`quadric`) and polynomial roots ([`roots`]). [`Placed`]
//! dispatches to them. [`straight_run`] takes all of a ray's hits along an untapered straight in
//! closed form, for the walk to skip stepping from hit to hit there.

pub mod axial;
pub mod bend;
pub mod corner;
mod quadric;
pub mod rect_bend;
pub mod roots;
pub mod route;
pub mod straight_run;
pub mod torus;

use glam::DVec3;

pub use axial::Axial;
pub use bend::Bend;
pub use corner::Corner;
pub use route::PlacedRoute;
pub use straight_run::StraightRun;
pub use torus::torus_exit;

/// An orthonormal frame: origin and axes, all in global coordinates.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Frame {
    /// Origin.
    pub origin: DVec3,
    /// Local x axis.
    pub x: DVec3,
    /// Local y axis.
    pub y: DVec3,
    /// Local z axis.
    pub z: DVec3,
}

impl Frame {
    /// A global point in local coordinates.
    #[inline]
    pub fn point_to_local(&self, p: DVec3) -> DVec3 {
        self.dir_to_local(p - self.origin)
    }
    /// A global direction in local coordinates.
    #[inline]
    pub fn dir_to_local(&self, d: DVec3) -> DVec3 {
        DVec3::new(d.dot(self.x), d.dot(self.y), d.dot(self.z))
    }
    /// A local point in global coordinates.
    #[inline]
    pub fn point_to_global(&self, q: DVec3) -> DVec3 {
        self.origin + self.dir_to_global(q)
    }
    /// A local direction in global coordinates.
    #[inline]
    pub fn dir_to_global(&self, d: DVec3) -> DVec3 {
        d.x * self.x + d.y * self.y + d.z * self.z
    }
}

/// The shape of a placed segment, in its local frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Shape {
    /// A straight or tapered run along local z.
    Axial(Axial),
    /// A circular bend about local z.
    Bend(Bend),
    /// A reflecting corner (origin where its axes meet).
    Corner(Corner),
}

/// A route segment placed in space.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Placed {
    /// The shape in local coordinates.
    pub shape: Shape,
    /// Round (true) or rectangular section.
    pub round: bool,
    /// The local frame.
    pub frame: Frame,
    /// Arc length along the route at the segment's start, mm.
    pub s_start_mm: f64,
    /// Centre-line length, mm.
    pub length_mm: f64,
}

/// What a ray inside a segment meets first.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Next {
    /// The side wall at distance `t`, with the outward unit normal there (local).
    Wall {
        /// Distance along the ray, mm.
        t: f64,
        /// Outward unit normal, local coordinates.
        normal: DVec3,
    },
    /// The segment's start plane (going back) at distance `t`.
    Start {
        /// Distance along the ray, mm.
        t: f64,
    },
    /// The segment's end plane (going on) at distance `t`.
    End {
        /// Distance along the ray, mm.
        t: f64,
    },
    /// A coated reflecting face at distance `t`, with its outward unit normal (local) and its
    /// specular reflectance.
    Coated {
        /// Distance along the ray, mm.
        t: f64,
        /// Outward unit normal, local coordinates.
        normal: DVec3,
        /// Specular reflectance of the coating, 0 to 1.
        reflectance: f64,
    },
}

impl Next {
    /// The distance along the ray, mm.
    #[inline]
    pub fn t(self) -> f64 {
        match self {
            Next::Wall { t, .. } | Next::Start { t } | Next::End { t } | Next::Coated { t, .. } => {
                t
            }
        }
    }
}

impl Placed {
    /// What the ray (local origin `o`, local unit direction `d`) meets first inside this
    /// segment. The ray must be inside the guide (or on its wall heading inwards).
    #[inline]
    pub fn next(&self, o: DVec3, d: DVec3) -> Next {
        match (&self.shape, self.round) {
            (Shape::Axial(a), true) => a.next_round(o, d),
            (Shape::Axial(a), false) => a.next_rectangular(o, d),
            (Shape::Bend(b), true) => b.next_torus(o, d),
            (Shape::Bend(b), false) => b.next_rectangular(o, d),
            (Shape::Corner(c), round) => c.next(round, o, d),
        }
    }

    /// Position along the segment's centre line of a local point, mm from the segment's start
    /// (clamped to the segment).
    pub fn along_mm(&self, p: DVec3) -> f64 {
        match &self.shape {
            Shape::Axial(a) => a.along_mm(p),
            Shape::Bend(b) => b.along_mm(p),
            Shape::Corner(c) => c.along_mm(p),
        }
    }

    /// Azimuth of a local point about the centre line, degrees in [0, 360), measured from the
    /// section's width axis towards its height axis.
    pub fn azimuth_deg(&self, p: DVec3) -> f64 {
        let (w, h) = match &self.shape {
            Shape::Axial(_) => (p.x, p.y),
            Shape::Bend(b) => b.section_coordinates(p),
            Shape::Corner(c) => c.section_coordinates(p),
        };
        libm::atan2(h, w).to_degrees().rem_euclid(360.0)
    }

    /// Signed distance-like test: how far outside the guide wall a local point lies (≤ 0 inside),
    /// mm. Used by tests and guards.
    pub fn outside_mm(&self, p: DVec3) -> f64 {
        match &self.shape {
            Shape::Axial(a) => a.outside_mm(self.round, p),
            Shape::Bend(b) => b.outside_mm(self.round, p),
            Shape::Corner(c) => c.outside_mm(self.round, p),
        }
    }
}
