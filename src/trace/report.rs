//! The reported result of a trace: energy budget, per-segment and contact figures, maps.

use serde::{Deserialize, Serialize};

use super::receiver_map::{self, RECEIVER_CELLS};
use super::{
    Batch, FluxUnit, Hist, IntensityUnit, Path, Prepared, SegmentKind, ANGULAR_CELLS, MAP_CELLS,
    ROUTE_BINS,
};
use crate::exit_figures::{
    half_intensity_full_angle, half_intensity_reference, ExitFigures, Uniformity,
};
use crate::far_field::FarField;
use crate::scenario::Flux;
use crate::stats::Share;

/// Half-angle of the cone about the exit axis over which the on-axis intensity is averaged,
/// degrees. Its solid angle (2π (1 − cos 5°) ≈ 0.0239 sr) is also the least that any window of
/// the peak search spans: a 1° ring on the axis spans only 0.00096 sr, so at 10⁵ rays it holds a
/// few dozen rays and its intensity is known to ±45 % — the brightest such ring is mostly noise,
/// and the brightest of many noisy rings drifts down as rays are added. A window of 0.0239 sr
/// holds 25 times as many rays (±9 % at 10⁵ rays for a Lambertian exit) and converges as
/// 1/√rays. The price is a stated smoothing: an intensity pattern narrower than 5° is reported
/// as its mean over the cone.
pub const AXIS_CONE_HALF_ANGLE_DEG: usize = 5;

impl Prepared {
    /// Turn merged batches into the reported result.
    pub fn report(&self, batch: &Batch) -> TraceReport {
        let ledger = self.ledger;
        let share = |j: usize| batch.tallies[j].share();
        let budget = Budget {
            delivered: share(ledger.delivered()),
            missed_entry: share(ledger.missed_entry()),
            reflected_entry: share(ledger.reflected_entry()),
            leaked: share(ledger.total_leaked()),
            contact: share(ledger.total_contact()),
            coating: share(ledger.total_coating()),
            absorbed: share(ledger.total_absorbed()),
            returned: share(ledger.returned()),
            stopped: share(ledger.stopped()),
        };
        // The partition: every fate, and absorption by segment (the totals duplicate it).
        let budget_sum = batch
            .tallies
            .iter()
            .enumerate()
            .filter(|&(j, _)| ledger.in_partition(j))
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
                kind: seg.kind(),
                start_mm: p.s_start_mm,
                length_mm: p.length_mm,
                leaked: share(ledger.leaked(i)),
                leaked_after_turn_back: share(ledger.after_leaked(i)),
                absorbed: share(ledger.absorbed(i)),
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
                lost: share(ledger.contact(k)),
            })
            .collect();
        let coatings = self
            .scenario
            .guide
            .coatings
            .iter()
            .enumerate()
            .map(|(k, c)| CoatingReport {
                name: c.name.clone(),
                kind: c.kind.words().to_string(),
                segment: c.segment,
                reached: share(ledger.coating_reached(k)),
                lost: share(ledger.coating(k)),
            })
            .collect();
        let intensity = Intensity::from_hist(&batch.angle_hist, batch.rays);
        let exit_turn_back = {
            let reached = &batch.tallies[ledger.reached_exit()];
            // Of the light reaching the exit face, with the interval from the replicates
            // (each part's sum with the whole gives their co-spread).
            let fraction = |j: usize, by_tir: Option<bool>| {
                batch.tallies[j]
                    .fraction_of_replicated(reached, &batch.tallies[ledger.reached_plus(by_tir)])
            };
            ExitTurnBack {
                reached: reached.share(),
                turned_back: share(ledger.turned_back()),
                by_total_reflection: share(ledger.turned_back_tir()),
                by_fresnel: share(ledger.turned_back_fresnel()),
                of_reaching: fraction(ledger.turned_back(), None).and_then(|turned_back| {
                    Some(TurnBackFractions {
                        turned_back,
                        by_total_reflection: fraction(ledger.turned_back_tir(), Some(true))?,
                        by_fresnel: fraction(ledger.turned_back_fresnel(), Some(false))?,
                    })
                }),
                ended: TurnBackEnds {
                    delivered_later: share(ledger.after_delivered()),
                    returned: share(ledger.after_returned()),
                    leaked: share(ledger.after_leaked_total()),
                    contact: share(ledger.after_contact()),
                    coating: share(ledger.after_coating()),
                    absorbed: share(ledger.after_absorbed()),
                    stopped: share(ledger.after_stopped()),
                },
            }
        };
        let exit_figures = ExitFigures {
            exit_face_uniformity: Uniformity::of_exit_map(
                &batch.exit_map,
                batch.rays,
                MAP_CELLS,
                &self.route.exit_section,
            ),
            receiver_uniformity: self
                .scenario
                .receiver
                .as_ref()
                .and_then(receiver_map::outline)
                .map(|o| Uniformity::of_map(&batch.receiver_map, batch.rays, RECEIVER_CELLS, &o)),
            half_intensity_full_angle_deg: half_intensity_full_angle(
                &batch.angle_hist,
                batch.rays,
                half_intensity_reference(&intensity.on_axis, &intensity.peak),
            ),
        };
        TraceReport {
            rays: batch.rays,
            seed: self.scenario.trace.seed,
            n_core: self.indices.n_core,
            n_surroundings: self.indices.n_out,
            n_gap: self.indices.n_gap,
            n_exit: self.indices.n_exit,
            delivered: share(ledger.delivered()),
            budget,
            budget_sum,
            exit_turn_back,
            segments,
            contacts,
            coatings,
            receiver: self.scenario.receiver.map(|_| batch.receiver.share()),
            absolute: self.absolute(batch, &intensity),
            wall_interactions: batch.wall_interactions,
            exit_map: ExitMap::new(
                &batch.exit_map,
                batch.rays,
                MAP_CELLS,
                2.0 * self.exit_half.0,
                2.0 * self.exit_half.1,
            ),
            receiver_map: self
                .scenario
                .receiver
                .as_ref()
                .and_then(receiver_map::outline)
                .map(|o| {
                    ExitMap::new(
                        &batch.receiver_map,
                        batch.rays,
                        RECEIVER_CELLS,
                        2.0 * o.half_width_mm,
                        2.0 * o.half_height_mm,
                    )
                }),
            intensity,
            angular_map: AngularMap::new(&batch.angular_map, batch.rays, ANGULAR_CELLS),
            far_field: FarField::from_hist(
                &batch.far_field,
                batch.rays,
                self.scenario.source.flux.map(|f| match f {
                    Flux::Mw(x) => (x, IntensityUnit::MilliwattPerSteradian),
                    Flux::Lm(x) => (x, IntensityUnit::Candela),
                }),
            ),
            leak_along_route: {
                let (share, ci95) = bin_shares(&batch.route_leak, batch.rays);
                RouteProfile {
                    bin_mm: self.route.length_mm / ROUTE_BINS as f64,
                    share,
                    ci95,
                }
            },
            coating_along_route: (!self.scenario.guide.coatings.is_empty()).then(|| {
                let (share, ci95) = bin_shares(&batch.route_coating, batch.rays);
                RouteProfile {
                    bin_mm: self.route.length_mm / ROUTE_BINS as f64,
                    share,
                    ci95,
                }
            }),
            exit_figures,
            paths: batch.paths.clone(),
        }
    }

    fn absolute(&self, batch: &Batch, intensity: &Intensity) -> Option<Absolute> {
        let flux = self.scenario.source.flux?;
        let (value, unit, intensity_unit) = match flux {
            Flux::Mw(x) => (x, FluxUnit::Milliwatt, IntensityUnit::MilliwattPerSteradian),
            Flux::Lm(x) => (x, FluxUnit::Lumen, IntensityUnit::Candela),
        };
        let delivered = batch.tallies[self.ledger.delivered()].share();
        let area_m2 = self.route.exit_section.area_mm2() * 1e-6;
        let with_ci = |share: f64, ci: f64| Value {
            value: share * value,
            ci95: ci * value,
        };
        // Share per steradian × flux, each a mean over its window (IntensityWindow).
        let (peak, axis) = (&intensity.peak, &intensity.on_axis);
        let on_axis = with_ci(axis.share_per_sr, axis.ci95_per_sr);
        Some(Absolute {
            unit,
            intensity_unit,
            delivered: with_ci(delivered.share, delivered.ci95),
            peak_intensity: with_ci(peak.share_per_sr, peak.ci95_per_sr),
            peak_angle_deg: peak.centre_deg(),
            on_axis_intensity: on_axis,
            mean_exit_luminance: (unit == FluxUnit::Lumen).then(|| Value {
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
    /// Absorbed by coated zones of the wall.
    pub coating: Share,
    /// Absorbed in the material.
    pub absorbed: Share,
    /// Left back through the entry face.
    pub returned: Share,
    /// Stopped by the interaction cap.
    pub stopped: Share,
}

impl Budget {
    /// The budget's shares in their fixed order, each as its key (the share's field name in the
    /// report, stable: the page keys its colours by it) and the words people read for it (the
    /// page's budget table and the CSV files). The one list of them: [`Budget::shares`] pairs
    /// each with its estimate, the CSV writers and the page (through the wasm layer) read it.
    pub const MECHANISMS: [(&'static str, &'static str); 9] = [
        ("delivered", "Reaches the window (exit face)"),
        ("missed_entry", "Misses the entry face"),
        ("reflected_entry", "Reflected at the entry face (Fresnel)"),
        ("leaked", "Leaks out of the side walls"),
        ("contact", "Lost into mounts touching the pipe"),
        ("coating", "Absorbed by coatings on the wall"),
        ("absorbed", "Absorbed in the material"),
        ("returned", "Comes back out of the entry face"),
        ("stopped", "Stopped by the wall-hit limit"),
    ];

    /// Every share in the order of [`Budget::MECHANISMS`], as (key, words, share); they sum to
    /// 1 (to rounding), as the budget is a partition of the emitted light.
    pub fn shares(&self) -> [(&'static str, &'static str, Share); 9] {
        // Each field named, no `..`: a share added to the budget does not compile until it is
        // listed here (and, with its key and words, in `MECHANISMS`).
        let Budget {
            delivered,
            missed_entry,
            reflected_entry,
            leaked,
            contact,
            coating,
            absorbed,
            returned,
            stopped,
        } = *self;
        let in_order = [
            delivered,
            missed_entry,
            reflected_entry,
            leaked,
            contact,
            coating,
            absorbed,
            returned,
            stopped,
        ];
        std::array::from_fn(|i| {
            let (key, words) = Self::MECHANISMS[i];
            (key, words, in_order[i])
        })
    }
}

/// Light turned back into the guide at the exit face, and what became of it.
///
/// A ray reaching the exit face is turned back by total internal reflection beyond the critical
/// angle against the exit medium, else by Fresnel reflection with probability R. Only a ray's
/// first arrival at the exit face counts here: a turned-back ray that comes back to the face
/// later is delivered or turned back again as the walk decides, and that is part of where the
/// turned-back light ended. The light turned back goes back through the route the way it came:
/// a bend that the closed form calls leak-free for the launch may leak it, since the rays come
/// back steeper than the launch.
///
/// Every share is of the emitted power unless named a fraction, with its 95 % half-width. The
/// budget ([`Budget`]) is the same with or without this breakdown: each share in `ended` is part
/// of the budget's share of the same name, and `ended` sums to `turned_back` (to rounding).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ExitTurnBack {
    /// Reaches the exit face (the weight on a ray's first arrival, after absorption on the way).
    pub reached: Share,
    /// Turned back into the guide there on its first arrival, by either mechanism.
    pub turned_back: Share,
    /// … by total internal reflection.
    pub by_total_reflection: Share,
    /// … by Fresnel reflection.
    pub by_fresnel: Share,
    /// The same as fractions of the light reaching the exit face; `None` when none reaches it.
    pub of_reaching: Option<TurnBackFractions>,
    /// Where the turned-back light ended.
    pub ended: TurnBackEnds,
}

/// Turned back at the exit face, as fractions of the light reaching it
/// ([`crate::stats::Estimate::fraction_of_replicated`]: ratio estimates with their 95 %
/// half-widths, from the replicates).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TurnBackFractions {
    /// By either mechanism.
    pub turned_back: Share,
    /// By total internal reflection.
    pub by_total_reflection: Share,
    /// By Fresnel reflection.
    pub by_fresnel: Share,
}

/// Where the light turned back at the exit face ended, as shares of the emitted power; they
/// sum to [`ExitTurnBack::turned_back`]. Leakage by segment is
/// [`SegmentReport::leaked_after_turn_back`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TurnBackEnds {
    /// Delivered through the exit face on a later pass.
    pub delivered_later: Share,
    /// Back out of the entry face.
    pub returned: Share,
    /// Leaked through the side walls (all segments).
    pub leaked: Share,
    /// Lost into contact zones.
    pub contact: Share,
    /// Absorbed by coated zones of the wall.
    pub coating: Share,
    /// Absorbed in the material after the turn.
    pub absorbed: Share,
    /// Stopped by the interaction cap.
    pub stopped: Share,
}

/// Shares and 95 % half-widths of a histogram's bins over `rays` rays. Where there is no
/// interval (fewer than two rays, see [`crate::stats`]) the half-width is written as 0, as the
/// report always has: these lists are plain numbers in the report format.
fn bin_shares(h: &Hist, rays: u64) -> (Vec<f64>, Vec<f64>) {
    h.estimates(rays)
        .map(|e| (e.mean, e.half_width95().unwrap_or(0.0)))
        .unzip()
}

/// Per-segment figures.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SegmentReport {
    /// Index in the route.
    pub index: usize,
    /// Straight, bend or taper.
    pub kind: SegmentKind,
    /// Start along the route, mm.
    pub start_mm: f64,
    /// Centre-line length, mm.
    pub length_mm: f64,
    /// Share leaked through this segment's walls.
    pub leaked: Share,
    /// Of `leaked`, the share that leaked after the exit face had turned it back
    /// ([`ExitTurnBack`]).
    pub leaked_after_turn_back: Share,
    /// Share absorbed in this segment.
    pub absorbed: Share,
    /// Wall hits counted in this segment.
    pub wall_hits: u64,
}

/// Per-coating figures.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CoatingReport {
    /// The coating's label.
    pub name: String,
    /// Its kind in plain words (white paint, metal, black).
    pub kind: String,
    /// Segment it is on.
    pub segment: usize,
    /// Share of the emitted power reaching it (each ray's weight on its first arrival there).
    pub reached: Share,
    /// Share absorbed by it.
    pub lost: Share,
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

/// The exit-face irradiance map: delivered shares on a square grid over the exit face.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ExitMap {
    /// Cells across and down.
    pub cells: usize,
    /// Width of the exit face covered, mm.
    pub width_mm: f64,
    /// Height of the exit face covered, mm.
    pub height_mm: f64,
    /// Share of the emitted power per cell, row-major from −y to +y.
    pub share: Vec<f64>,
    /// 95 % half-width of each cell's share.
    pub ci95: Vec<f64>,
    /// Share per mm² of each cell (relative irradiance).
    pub share_per_area: Vec<f64>,
}

impl ExitMap {
    fn new(h: &Hist, rays: u64, cells: usize, width_mm: f64, height_mm: f64) -> ExitMap {
        let (share, ci95, share_per_area) = grid(h, rays, cells, width_mm, height_mm);
        ExitMap {
            cells,
            width_mm,
            height_mm,
            share,
            ci95,
            share_per_area,
        }
    }
}

/// The angular map: delivered shares on a square grid over the direction cosines (x, y) beyond
/// the exit face, each from −1 to 1.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AngularMap {
    /// Cells across and down.
    pub cells: usize,
    /// Span of the x direction cosine covered (2: from −1 to 1). The JSON key stays `width_mm`
    /// for compatibility of the report format.
    #[serde(rename = "width_mm")]
    pub cosine_span_x: f64,
    /// Span of the y direction cosine covered (2). The JSON key stays `height_mm` for
    /// compatibility of the report format.
    #[serde(rename = "height_mm")]
    pub cosine_span_y: f64,
    /// Share of the emitted power per cell, row-major from −y to +y.
    pub share: Vec<f64>,
    /// 95 % half-width of each cell's share.
    pub ci95: Vec<f64>,
    /// Share per unit of direction-cosine area of each cell.
    pub share_per_area: Vec<f64>,
}

impl AngularMap {
    fn new(h: &Hist, rays: u64, cells: usize) -> AngularMap {
        let (cosine_span_x, cosine_span_y) = (2.0, 2.0);
        let (share, ci95, share_per_area) = grid(h, rays, cells, cosine_span_x, cosine_span_y);
        AngularMap {
            cells,
            cosine_span_x,
            cosine_span_y,
            share,
            ci95,
            share_per_area,
        }
    }
}

/// Shares, half-widths and shares per unit area of the cells of a square grid `cells` across,
/// spanning `span_x` by `span_y`.
fn grid(h: &Hist, rays: u64, cells: usize, span_x: f64, span_y: f64) -> Grid {
    let (share, ci95) = bin_shares(h, rays);
    let cell_area = span_x * span_y / (cells * cells) as f64;
    let share_per_area = share.iter().map(|v| v / cell_area).collect();
    (share, ci95, share_per_area)
}

/// Shares, half-widths and shares per unit area of a grid's cells.
type Grid = (Vec<f64>, Vec<f64>, Vec<f64>);

/// Intensity against polar angle beyond the exit face: per 1° ring for the curve, and averaged
/// over windows of adequate solid angle for the on-axis and peak figures.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Intensity {
    /// Bin centres, degrees.
    pub angle_deg: Vec<f64>,
    /// Share of the emitted power per steradian in each 1° ring.
    pub share_per_sr: Vec<f64>,
    /// 95 % half-width of each ring's value.
    pub ci95_per_sr: Vec<f64>,
    /// On the axis: the mean over the cone of [`AXIS_CONE_HALF_ANGLE_DEG`] about the exit axis.
    pub on_axis: IntensityWindow,
    /// The brightest of [`peak_windows`]: the on-axis cone, then rings each spanning at least
    /// its solid angle. The first of equal windows (the one nearest the axis).
    pub peak: IntensityWindow,
}

/// The mean intensity over a cone about the exit axis (`from_deg` = 0) or a ring around it:
/// the delivered share that leaves between `from_deg` and `to_deg` from the axis, divided by the
/// window's solid angle Ω = 2π (cos from − cos to) (the solid angle of a ring of polar angles;
/// from memory, any radiometry text).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct IntensityWindow {
    /// Inner edge, degrees from the exit axis.
    pub from_deg: f64,
    /// Outer edge, degrees from the exit axis.
    pub to_deg: f64,
    /// Solid angle of the window, sr.
    pub solid_angle_sr: f64,
    /// Share of the emitted power per steradian, the mean over the window.
    pub share_per_sr: f64,
    /// Its 95 % half-width (from the window's own rays: a ray lands in one ring at most, so the
    /// rings' sums and sums of squares add); infinite (`null`) below two rays.
    #[serde(deserialize_with = "crate::export::ci95_or_infinite")]
    pub ci95_per_sr: f64,
}

impl IntensityWindow {
    /// The window's direction for a single figure: 0 for the cone about the axis, else the middle
    /// of the ring, degrees.
    pub fn centre_deg(&self) -> f64 {
        if self.from_deg == 0.0 {
            0.0
        } else {
            0.5 * (self.from_deg + self.to_deg)
        }
    }
}

/// Solid angle of the ring between polar angles `from_deg` and `to_deg` about an axis, sr:
/// Ω = 2π (cos from − cos to).
fn ring_solid_angle_sr(from_deg: f64, to_deg: f64) -> f64 {
    std::f64::consts::TAU * (libm::cos(from_deg.to_radians()) - libm::cos(to_deg.to_radians()))
}

/// The windows of the peak search over `bins` 1° rings, as [from, to) in whole degrees: the cone
/// of [`AXIS_CONE_HALF_ANGLE_DEG`] about the axis, then rings of whole degrees, each widened
/// until it spans at least the cone's solid angle (two or three degrees near the axis, one
/// beyond about 14°). A last ring that cannot reach it joins the one before.
pub fn peak_windows(bins: usize) -> Vec<(usize, usize)> {
    let cone = AXIS_CONE_HALF_ANGLE_DEG.min(bins);
    let least_sr = ring_solid_angle_sr(0.0, cone as f64);
    let mut windows = vec![(0, cone)];
    let mut from = cone;
    while from < bins {
        let mut to = from + 1;
        while to < bins && ring_solid_angle_sr(from as f64, to as f64) < least_sr {
            to += 1;
        }
        if ring_solid_angle_sr(from as f64, to as f64) < least_sr {
            if let Some(last) = windows.last_mut() {
                last.1 = to;
            }
        } else {
            windows.push((from, to));
        }
        from = to;
    }
    windows
}

impl Intensity {
    fn from_hist(hist: &Hist, rays: u64) -> Intensity {
        let (share, ci) = bin_shares(hist, rays);
        let n = share.len();
        let mut angle_deg = Vec::with_capacity(n);
        let mut share_per_sr = Vec::with_capacity(n);
        let mut ci95_per_sr = Vec::with_capacity(n);
        for i in 0..n {
            let omega = ring_solid_angle_sr(i as f64, (i + 1) as f64);
            angle_deg.push(i as f64 + 0.5);
            share_per_sr.push(share[i] / omega);
            ci95_per_sr.push(ci[i] / omega);
        }
        // Window k is the histogram's group k (its replicates give the interval).
        let window = |(k, (from, to)): (usize, (usize, usize))| {
            let e = hist.group_estimate(rays, from..to, Some(k));
            let omega = ring_solid_angle_sr(from as f64, to as f64);
            IntensityWindow {
                from_deg: from as f64,
                to_deg: to as f64,
                solid_angle_sr: omega,
                share_per_sr: e.mean / omega,
                ci95_per_sr: e.half_width95().unwrap_or(f64::INFINITY) / omega,
            }
        };
        let windows: Vec<IntensityWindow> = peak_windows(n)
            .into_iter()
            .enumerate()
            .map(window)
            .collect();
        let on_axis = windows[0];
        let peak = windows
            .iter()
            .copied()
            .reduce(|best, w| {
                if w.share_per_sr > best.share_per_sr {
                    w
                } else {
                    best
                }
            })
            .unwrap_or(on_axis);
        Intensity {
            angle_deg,
            share_per_sr,
            ci95_per_sr,
            on_axis,
            peak,
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
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Absolute {
    /// Unit of flux: mW or lm.
    pub unit: FluxUnit,
    /// Unit of intensity: mW/sr or cd.
    pub intensity_unit: IntensityUnit,
    /// Delivered flux.
    pub delivered: Value,
    /// Peak intensity beyond the exit face: the mean over the brightest window of the peak
    /// search ([`Intensity::peak`]: the 5° cone about the axis, or a ring of at least its solid
    /// angle), flux × share per sr. Picking the brightest window from the same rays leans high
    /// when several windows are nearly equal (a flat top), by less than the interval in our
    /// checks.
    pub peak_intensity: Value,
    /// Direction of the peak window, degrees from the exit axis: 0 for the cone about the axis,
    /// else the middle of the ring ([`IntensityWindow::centre_deg`]).
    pub peak_angle_deg: f64,
    /// Intensity along the exit axis: the mean over the cone of [`AXIS_CONE_HALF_ANGLE_DEG`]
    /// about it ([`Intensity::on_axis`]).
    pub on_axis_intensity: Value,
    /// Mean luminance of the exit face along its axis, cd/m² (luminous input only): the
    /// luminance L(x) of each point x of the face in the axial direction, averaged over the
    /// face's area A. A flat face's intensity in a direction θ from its normal is
    /// I(θ) = ∫ L(x, θ) cos θ dA (the definition of luminance; from memory, any radiometry
    /// text), so along the axis (θ = 0) the mean is L̄ = I(0) / A: the on-axis intensity over
    /// the exit-face area. In the medium beyond the exit face (air, or a bonded window).
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
    /// Light turned back at the exit face and where it ended (a breakdown of the budget).
    pub exit_turn_back: ExitTurnBack,
    /// Per-segment figures.
    pub segments: Vec<SegmentReport>,
    /// Per-contact figures.
    pub contacts: Vec<ContactReport>,
    /// Per-coating figures (left out of the JSON when the scenario has no coatings).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub coatings: Vec<CoatingReport>,
    /// Share landing on the receiver.
    pub receiver: Option<Share>,
    /// Absolute figures.
    pub absolute: Option<Absolute>,
    /// Wall interactions traced.
    pub wall_interactions: u64,
    /// Exit-face irradiance map (share per cell).
    pub exit_map: ExitMap,
    /// Where delivered light lands on the receiver (the detector), over its bounding box, as
    /// the exit map; only when the scenario has a receiver.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub receiver_map: Option<ExitMap>,
    /// Intensity against angle.
    pub intensity: Intensity,
    /// 2D angular map over direction cosines (shares per cell; kept as it was in the report
    /// format: the far-field map below is the intensity a designer reads).
    pub angular_map: AngularMap,
    /// Intensity over horizontal and vertical angle beyond the exit face
    /// ([`crate::far_field`]); empty in a report written before it.
    #[serde(default)]
    pub far_field: FarField,
    /// Leakage along the route.
    pub leak_along_route: RouteProfile,
    /// Light absorbed by the wall's coatings along the route, binned as the leakage (left out
    /// when the scenario has no coatings). Kept apart from the leakage: it does not leave the
    /// pipe (it warms the coating), so it lights nothing near it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub coating_along_route: Option<RouteProfile>,
    /// The exit's uniformity and half-intensity angle ([`crate::exit_figures`]).
    #[serde(default)]
    pub exit_figures: ExitFigures,
    /// Sampled ray paths (left out of the JSON when none were asked for).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub paths: Vec<Path>,
}
