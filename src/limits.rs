//! The allowed range of every number in the documents and on the command line, each in one
//! place with the reason for it, and the [`Range`] and [`Count`] types that check a value
//! against one and word the problem for people.
//!
//! Three kinds of reason recur: *physics and geometry* (a cone opens into the half-space in front
//! of a face, a bend turns at most half a turn), *memory or time* (what one run may cost), and
//! *data range* (where the material data hold, what a browser's doubles keep exactly). The others
//! are *sanity* bounds far beyond any light guide, there to catch a slip of unit (µm typed as mm,
//! say) rather than to restrict a design.

use crate::error::{show, FieldError};

/// An allowed interval of a real number: each end open or closed, with the unit shown after
/// each bound and an optional note after the rule. NaN and ±∞ are always refused.
///
/// [`Range::check`] words a refusal by the end it breaks, `must be at least 0 mm, got -1` or
/// `must be less than 90°, got 90`; [`Range::rule`] states both ends, and an infinite upper end
/// leaves the upper bound out of it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Range {
    /// Lower bound.
    pub lo: f64,
    /// Whether `lo` itself is allowed.
    pub lo_closed: bool,
    /// Upper bound (may be +∞: no upper bound).
    pub hi: f64,
    /// Whether `hi` itself is allowed.
    pub hi_closed: bool,
    /// Unit shown after each bound, with its leading space where one is wanted: `" mm"`, `"°"`.
    pub unit: &'static str,
    /// Note shown once after the rule, with its leading space: `" (angles ascending)"`.
    pub note: &'static str,
}

impl Range {
    /// [lo, hi], no unit.
    pub const fn closed(lo: f64, hi: f64) -> Range {
        Range {
            lo,
            lo_closed: true,
            hi,
            hi_closed: true,
            unit: "",
            note: "",
        }
    }

    /// (lo, hi], no unit.
    pub const fn open_closed(lo: f64, hi: f64) -> Range {
        Range {
            lo_closed: false,
            ..Range::closed(lo, hi)
        }
    }

    /// [lo, hi), no unit.
    pub const fn closed_open(lo: f64, hi: f64) -> Range {
        Range {
            hi_closed: false,
            ..Range::closed(lo, hi)
        }
    }

    /// The same range with a unit shown after each bound (`" mm"`, `"°"`).
    pub const fn unit(self, unit: &'static str) -> Range {
        Range { unit, ..self }
    }

    /// The same range with a note shown after the rule (`" (after from_mm)"`).
    pub const fn note(self, note: &'static str) -> Range {
        Range { note, ..self }
    }

    /// The same range starting just above `lo` (open lower end): for a value that must follow
    /// another one.
    pub const fn above(self, lo: f64) -> Range {
        Range {
            lo,
            lo_closed: false,
            ..self
        }
    }

    /// Whether `x` lies in the range (never for NaN or ±∞).
    pub fn contains(&self, x: f64) -> bool {
        x.is_finite() && self.above_lo(x) && self.below_hi(x)
    }

    fn above_lo(&self, x: f64) -> bool {
        if self.lo_closed {
            x >= self.lo
        } else {
            x > self.lo
        }
    }

    fn below_hi(&self, x: f64) -> bool {
        if self.hi_closed {
            x <= self.hi
        } else {
            x < self.hi
        }
    }

    /// The lower end in words: `more than 0 mm`, `at least 200 nm`.
    fn lo_words(&self) -> String {
        let word = if self.lo_closed {
            "at least"
        } else {
            "more than"
        };
        format!("{word} {}{}", show(self.lo), self.unit)
    }

    /// The upper end in words: `at most 1000 mm`, `less than 90°`.
    fn hi_words(&self) -> String {
        let word = if self.hi_closed {
            "at most"
        } else {
            "less than"
        };
        format!("{word} {}{}", show(self.hi), self.unit)
    }

    /// The whole rule for people, in words: `must be more than 0 mm and at most 1000 mm`, then
    /// the note.
    pub fn rule(&self) -> String {
        if self.hi.is_infinite() {
            format!("must be {}{}", self.lo_words(), self.note)
        } else {
            format!(
                "must be {} and {}{}",
                self.lo_words(),
                self.hi_words(),
                self.note
            )
        }
    }

    /// Why `x` is refused, in words: only the end it breaks (`must be more than 1.25 mm (note),
    /// got 1`, `must be at most 1000 mm, got 2000`), so that a short message says what to do;
    /// the whole rule for a value that is not a finite number. The note (which explains the
    /// lower end, e.g. one set by another field with [`Range::above`]) follows the lower end.
    pub fn refusal(&self, x: f64) -> String {
        if !x.is_finite() {
            format!("{}, got {}", self.rule(), show(x))
        } else if !self.above_lo(x) {
            format!("must be {}{}, got {}", self.lo_words(), self.note, show(x))
        } else {
            format!("must be {}, got {}", self.hi_words(), show(x))
        }
    }

    /// `x` when it lies in the range, else a problem of `field` naming the end it breaks and
    /// the value ([`Range::refusal`]).
    pub fn check(&self, field: &str, x: f64) -> Result<f64, FieldError> {
        if self.contains(x) {
            Ok(x)
        } else {
            Err(FieldError::new(field, self.refusal(x)))
        }
    }
}

/// An allowed range of a whole number (a count), both ends included.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Count {
    /// Smallest allowed.
    pub min: u64,
    /// Largest allowed.
    pub max: u64,
}

impl Count {
    /// min..=max.
    pub const fn new(min: u64, max: u64) -> Count {
        Count { min, max }
    }

    /// Whether `n` lies in the range.
    pub fn contains(&self, n: u64) -> bool {
        (self.min..=self.max).contains(&n)
    }

    /// The rule for people: `must be a whole number from 1 to 10⁹`.
    pub fn rule(&self) -> String {
        format!(
            "must be a whole number from {} to {}",
            show_count(self.min),
            show_count(self.max)
        )
    }

    /// The range alone, for a sentence of its own: `from 2 to 200` (`must list from 2 to 200
    /// values`).
    pub fn span(&self) -> String {
        format!("from {} to {}", show_count(self.min), show_count(self.max))
    }

    /// `n` when it lies in the range, else a problem of `field` naming the rule and the value.
    pub fn check(&self, field: &str, n: u64) -> Result<u64, FieldError> {
        if self.contains(n) {
            Ok(n)
        } else {
            Err(FieldError::new(
                field,
                format!("{}, got {}", self.rule(), show_count(n)),
            ))
        }
    }
}

/// A count for people: as digits up to a million, a power of ten as `10⁹`, the largest whole
/// number a browser keeps as `2⁵³ − 1`, and other large counts in e-notation (`1.2e10`) so that
/// a message never spells out a long number.
pub fn show_count(n: u64) -> String {
    const SUPERSCRIPTS: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    if n <= 1_000_000 {
        return n.to_string();
    }
    if n == MAX_WHOLE {
        return "2⁵³ − 1".to_string();
    }
    let digits = n.to_string();
    if digits[1..].bytes().all(|b| b == b'0') && digits.starts_with('1') {
        let power: String = (digits.len() - 1)
            .to_string()
            .bytes()
            .map(|b| SUPERSCRIPTS[usize::from(b - b'0')])
            .collect();
        return format!("10{power}");
    }
    show(n as f64)
}

/// The problems a document's checks find, in the order the checks run (which is the order they
/// are listed in: document order).
#[derive(Debug, Default)]
pub(crate) struct FieldErrors(pub(crate) Vec<FieldError>);

impl FieldErrors {
    /// The value of a passed check; the problem of a failed one is kept.
    pub(crate) fn keep<T>(&mut self, checked: Result<T, FieldError>) -> Option<T> {
        checked.map_err(|e| self.0.push(e)).ok()
    }

    /// Check a number against a range.
    pub(crate) fn range(&mut self, field: &str, x: f64, range: Range) -> Option<f64> {
        self.keep(range.check(field, x))
    }

    /// Check a whole number against a count.
    pub(crate) fn count(&mut self, field: &str, n: u64, count: Count) -> Option<u64> {
        self.keep(count.check(field, n))
    }

    /// Check a document's `version`: this version of tirtrace reads version `current` only.
    pub(crate) fn version(&mut self, found: u32, current: u32) {
        if found != current {
            self.push(
                "version",
                format!("must be {current} (this version of tirtrace), got {found}"),
            );
        }
    }

    /// A problem found by a check of its own.
    pub(crate) fn push(&mut self, field: impl Into<String>, message: impl Into<String>) {
        self.0.push(FieldError::new(field, message));
    }

    /// `found` when no problem was kept, else every problem.
    pub(crate) fn verdict<T>(self, found: Option<T>) -> Result<T, Vec<FieldError>> {
        match found {
            Some(found) if self.0.is_empty() => Ok(found),
            _ => Err(self.0),
        }
    }
}

/// Smallest size of anything in a document (a section, a length, an emitter, a detector), mm.
/// Physics: below a micrometre — two wavelengths of visible light — ray optics no longer
/// describes a light pipe; and every area and length a report divides by then stays far from
/// zero, so no infinity or NaN can reach a figure.
pub const MIN_SIZE_MM: f64 = 0.001;

/// A size `0.001 ≤ x ≤ max_mm`, mm ([`MIN_SIZE_MM`]): the commonest range.
const fn size_mm(max_mm: f64) -> Range {
    Range::closed(MIN_SIZE_MM, max_mm).unit(" mm")
}

// --- Light ---------------------------------------------------------------------------------

/// Vacuum wavelength, nm (both documents). Data range: near UV to short-wave infrared, where the
/// built-in index models hold (each material narrows it further with its own validity range).
pub const WAVELENGTH_NM: Range = Range::closed(200.0, 2500.0).unit(" nm");

/// Half-angle of a cone of light in front of a face, degrees: the quick look's launch cone and a
/// beam's divergence. Physics: a cone into the half-space ahead opens at most 90°.
pub const CONE_HALF_ANGLE_DEG: Range = Range::closed(0.0, 90.0).unit("°");

/// Half-intensity half-angle of a cos^m pattern, degrees. Physics: m = −ln 2 / ln cos θ½
/// ([`crate::guide::cos_power_exponent`]) is infinite at 0° and zero at 90°; inside these bounds
/// it stays finite and positive (about 1.8·10⁴ down to 0.15).
pub const HALF_INTENSITY_ANGLE_DEG: Range = Range::closed(0.5, 89.5).unit("°");

/// Tilt of the emitter's axis from the guide axis, degrees. Geometry: from 90° on, the emitter's
/// axis no longer points at the entry face.
pub const TILT_DEG: Range = Range::closed_open(0.0, 90.0).unit("°");

/// A direction about an axis (a bend's turn, the emitter's tilt direction), degrees: one turn
/// either way, so a value is never more than one turn off its meaning.
pub const AZIMUTH_DEG: Range = Range::closed(-360.0, 360.0).unit("°");

/// Emitted flux, in the flux's own unit (mW or lm, given with [`Range::unit`]). Sanity: 10⁹ mW
/// (a megawatt) or 10⁹ lm is no LED; the upper bound catches a slip of unit.
pub const FLUX: Range = Range::open_closed(0.0, 1e9);

/// Angle of an intensity table's row, degrees, each after the previous row (see
/// [`Range::above`]). Physics: an LED emits into the half-space ahead, up to 90°.
pub const TABLE_ANGLE_DEG: Range = Range::closed(0.0, 90.0)
    .unit("°")
    .note(" (the previous row's angle: angles ascend)");

/// Relative intensity of an intensity table's row. Sanity: relative values need no more than
/// twelve decades.
pub const TABLE_INTENSITY: Range = Range::closed(0.0, 1e12);

/// Rows of an intensity table. Two make a line. Time: the table is looked up at every step of the
/// sampler's integration grid (2048 steps over 90°), and a thousand rows is about as fine as that
/// grid can show.
pub const TABLE_ROWS: Count = Count::new(2, 1000);

/// A refractive index: a custom constant index, and the index any custom model gives at the
/// wavelength. Physics: no medium's index is below vacuum's, 1; none that is clear anywhere in
/// [`WAVELENGTH_NM`] reaches 5 there (the highest stay near 4), so beyond it a coefficient is
/// mistyped.
pub const REFRACTIVE_INDEX: Range = Range::closed(1.0, 5.0);

// --- Guide and route -----------------------------------------------------------------------

/// A guide's cross-section size (diameter, width, height), mm, in both documents and at the end
/// of a taper. Sanity: a metre is no light guide.
pub const SECTION_MM: Range = size_mm(1000.0);

/// Length of a straight or a taper, mm. Sanity: a hundred metres.
pub const SEGMENT_LENGTH_MM: Range = size_mm(100_000.0);

/// Largest centre-line radius of a scenario's bend, mm (its smallest is half the guide's size
/// across the bend, so that the inner wall keeps a radius). Sanity: a kilometre bend is a
/// straight run.
pub const BEND_RADIUS_MAX_MM: f64 = 1_000_000.0;

/// Inner radius of the quick look's bend, mm. Sanity: a hundred metres.
pub const BEND_INNER_RADIUS_MM: Range = size_mm(100_000.0);

/// Angle a bend turns through, degrees (both documents). Geometry: a point's place along a bend
/// is read from its angle about the bend's axis, which tells places apart within half a turn
/// only; a longer turn is written as several bends.
pub const BEND_ANGLE_DEG: Range = Range::open_closed(0.0, 180.0).unit("°");

/// Angle a reflecting corner turns through, degrees. Geometry: the corner's legs reach
/// h·max(cot(θ/2), tan(θ/2)) along each axis from where the axes meet (h: half the section's
/// size across the turn), so that its flat face and both legs fit between its end planes; at 15°
/// or 165° that is already 7.6 h, and a gentler or a sharper turn is a bend's job.
pub const CORNER_ANGLE_DEG: Range = Range::closed(15.0, 165.0).unit("°");

/// Specular reflectance of a corner's coated face (what it does not reflect, it absorbs): a
/// fraction.
pub const CORNER_REFLECTANCE: Range = Range::closed(0.0, 1.0);

/// Most segments a route may have (at least one). Memory and time: the route is placed, checked
/// A shaped face's radius of curvature, mm (its lower end, more than half the section's size
/// across its corners, is checked with the section). Sanity: far beyond any light guide.
pub const FACE_RADIUS_MM: Range = Range::open_closed(MIN_SIZE_MM, 100_000.0).unit(" mm");

/// The angle of a cut end face to the section, degrees. Geometry: 0 is a flat face; beyond 60°
/// the cut runs out longer than 3.5 times the section's height (use a bend to turn the light).
pub const FACE_CUT_ANGLE_DEG: Range = Range::open_closed(0.0, 60.0).unit("°");

/// The roughness α of a textured face (GGX facet distribution). Physics: below 0.01 the face is
/// all but polished (use a flat face); at 1 the facets' slopes are spread as widely as the model
/// is used for.
pub const FACE_ROUGHNESS: Range = Range::closed(0.01, 1.0);

/// and drawn segment by segment; 64 is far more than any light pipe needs.
pub const MAX_SEGMENTS: usize = 64;

/// Bulk attenuation, dB/m. Sanity: 10⁵ dB/m loses everything within a millimetre.
pub const ATTENUATION_DB_PER_M: Range = Range::closed(0.0, 100_000.0).unit(" dB/m");

/// Start of a contact's sector of the perimeter, degrees (its end follows it, up to a full
/// turn; see [`Range::above`]). Geometry: one turn round the axis.
pub const SECTOR_DEG: Range = Range::closed_open(0.0, 360.0).unit("°");

/// End of a contact's sector, degrees: after its start, up to a full turn.
pub const SECTOR_END_DEG: Range = Range::closed(0.0, 360.0)
    .unit("°")
    .note(" (where the sector starts)");

/// Reflectance of a wall coating (white paint's diffuse ρ, metal's specular R): a share of
/// the light, 0 to 1.
pub const COATING_REFLECTANCE: Range = Range::closed(0.0, 1.0);

// --- Source and receiver -------------------------------------------------------------------

/// Size of an emitter (LED disk diameter or square side, beam diameter), mm. Sanity: a metre.
pub const EMITTER_MM: Range = size_mm(1000.0);

/// Gap between the emitter and the entry face, mm. Sanity: a metre.
pub const GAP_MM: Range = Range::closed(0.0, 1000.0).unit(" mm");

/// The gap's range in the document's schema: below 0 only with a pocket in the entry face, less
/// deep than the pocket (checked with it); the schema can only bound it by the deepest pocket.
pub const GAP_ANY_FACE_MM: Range = Range::open_closed(-FACE_RADIUS_MM.hi, GAP_MM.hi).unit(" mm");

/// Lateral offset of the emitter from the guide axis, mm, each way. Sanity: a metre.
pub const OFFSET_MM: Range = Range::closed(-1000.0, 1000.0).unit(" mm");

/// Size of a receiver (diameter, width, height), mm. Sanity: ten metres.
pub const RECEIVER_MM: Range = size_mm(10_000.0);

/// Distance of a receiver beyond the exit face, mm. Sanity: a hundred metres.
pub const RECEIVER_DISTANCE_MM: Range = Range::closed(0.0, 100_000.0).unit(" mm");

// --- Tracing -------------------------------------------------------------------------------

/// Largest whole number a JSON reader using doubles (a browser) keeps exactly: 2⁵³ − 1. Data
/// range: the largest seed (and whole number read), so that the page and the command line read
/// the same one.
pub const MAX_WHOLE: u64 = (1 << 53) - 1;

/// Rays of one trace (the scenario's `trace.rays` and `--rays`). Time: a billion rays already
/// take hours; more is a slip of the keyboard.
pub const RAYS: Count = Count::new(1, 1_000_000_000);

/// The setting `trace.max_interactions`: interactions after which a ray is stopped (and counted
/// as stopped). Time: a ray trapped in the guide (a ring of total reflections) would never end;
/// at most 10⁷ interactions, one ray cannot hold a trace up for long.
pub const MAX_INTERACTIONS: Count = Count::new(1, 10_000_000);

/// Threads of `tirtrace trace --threads` (0: all cores). Memory: each thread holds its own stack
/// and tallies; more threads than cores only cost memory.
pub const THREADS: Count = Count::new(0, 1024);

/// Ray paths `tirtrace trace --paths` keeps. Memory: paths are recorded in the first batch only,
/// so at most one batch's rays ([`crate::trace::BATCH_RAYS`]).
pub const PATHS: Count = Count::new(0, 4096);

// --- Studies --------------------------------------------------------------------------------

/// Points of a sweep (`vary.values`, or `vary.steps` + 1). At least two: a sweep compares
/// points. Time and memory: every point is traced with all the scenario's rays, and the points'
/// batches are held together while they are merged; two hundred points draw any curve a
/// designer reads.
pub const SWEEP_POINTS: Count = Count::new(2, 200);

/// Equal steps of a sweep from `vary.from` to `vary.to` (one fewer than its points,
/// [`SWEEP_POINTS`]).
pub const SWEEP_STEPS: Count = Count::new(SWEEP_POINTS.min - 1, SWEEP_POINTS.max - 1);

/// Rays of a whole sweep, the rays of one point times the points. Time: no more than the
/// longest single trace ([`RAYS`]).
pub const SWEEP_RAYS: Count = Count::new(1, RAYS.max);

/// Variants of a tolerance study (`tolerances.variants`). At least two: a spread needs two
/// values. Memory: every variant's prepared scenario is held while the study runs (a few KB
/// each, some 100 KB with a 1000-row intensity table and 64 segments: at most some 200 MB);
/// time: bounded with the rays by [`TOLERANCE_RAYS`]. Two thousand variants put the 5th and 95th
/// percentiles within about a percent of the spread.
pub const TOLERANCE_VARIANTS: Count = Count::new(2, 2000);

/// Spreads of a tolerance study (`tolerances.spreads`). Time: each adds two one-at-a-time
/// traces; a scenario has far fewer numbers worth a tolerance.
pub const TOLERANCE_SPREADS: Count = Count::new(1, 32);

/// A spread's `sigma` or `half_width` (the field's own unit). At least 0: a zero tolerance keeps
/// the number at its nominal (a tolerance switched off without removing it); at most 1000, the
/// size of the largest section.
pub const TOLERANCE_SPREAD: Range = Range::closed(0.0, 1000.0);

/// Rays of a whole tolerance study: the scenario's rays times the traced scenarios (nominal,
/// two per spread, every variant). Time: no more than the longest single trace ([`RAYS`]).
pub const TOLERANCE_RAYS: Count = Count::new(1, RAYS.max);

/// Refused variants named with their problems in a tolerance report (the others are counted,
/// and each variant's own entry still lists its problems). Readability.
pub const TOLERANCE_NAMED_REFUSALS: usize = 5;

/// Characters of a field path (`vary.field`). Sanity: the deepest path of a scenario is some
/// fifty characters.
pub const FIELD_PATH_CHARS: Count = Count::new(1, 200);

/// The allowed loss of a search (`find.bend_leak_at_most_percent`,
/// `find.delivered_loss_at_most_percent`), % of the light entering the bend or of the
/// scenario's own delivered share. Above 0: "no loss at all" cannot be told from noise by any
/// number of rays (a search for it would never end); 100 % allows everything.
pub const FIND_PERCENT: Range = Range::open_closed(0.0, 100.0).unit(" %");

/// Values of a search's first, even scan from `find.from` to `find.to` (both ends included):
/// enough to bracket the crossing in one eighth of the range and to see a criterion that does
/// not change monotonically.
pub const FIND_SCAN_POINTS: usize = 9;

/// A search's resolution as a fraction of its range: bisection stops when the bracket is this
/// narrow (one part in a thousand is finer than any part is made to).
pub const FIND_RESOLUTION: f64 = 1e-3;

/// Evaluations of a search at most (each traces the scenario with all its rays). Time: the scan
/// ([`FIND_SCAN_POINTS`]) plus three bisections (the answer and both ends of its interval) of
/// seven halvings each (an eighth of the range down to [`FIND_RESOLUTION`]) need 30; the rest
/// is slack.
pub const FIND_EVALUATIONS: usize = 40;

/// Rays of a whole search: rays per trace times the traces of the most evaluations
/// ([`FIND_EVALUATIONS`], two traces each when the delivered share is compared with the
/// scenario's own). Time: no more than the longest single trace ([`RAYS`]).
pub const FIND_RAYS: Count = Count::new(1, RAYS.max);

// --- What a run keeps and reads -------------------------------------------------------------

/// Vertices kept of one drawn ray path (the emitter, the entry, each wall hit, the end).
/// Memory: a ray may meet the wall up to [`MAX_INTERACTIONS`] times, and a thin fibre metres
/// long does (a 0.1 mm fibre 100 m long: some 400 000 wall hits a ray, 10 MB a path), so
/// uncapped, the page's 90 kept paths took gigabytes; a drawing of a thousand wall hits is
/// already a solid tangle. A longer path keeps its first vertices and is marked cut short.
pub const PATH_POINTS: usize = 1000;

/// Vertices of all the kept paths of a trace together: each of `n` kept paths holds at most
/// `PATH_POINTS_TOTAL / n` ([`crate::trace::path_points_each`]) and [`PATH_POINTS`]. Memory:
/// 250 000 vertices are 6 MB in the core and some 25 MB of the command line's JSON or the
/// page's arrays, however many paths `--paths` asks for (its most, [`PATHS`], keep 61 each).
pub const PATH_POINTS_TOTAL: usize = 250_000;

// A path of the most paths still draws more than a few wall hits.
const _: () = assert!(PATH_POINTS_TOTAL / PATHS.max as usize >= 50);

/// Bytes of a document the command line reads (a scenario, a study or a quick-look design, from
/// a file or standard input): 16 MiB. Memory: the text is read whole before it is checked, and
/// without a bound a stream that never ends (`/dev/zero`) would be read until memory runs out;
/// the largest valid document (64 segments, a 1000-row intensity table) is some 100 kB.
pub const DOCUMENT_BYTES: u64 = 16 << 20;

/// Bytes of a piece of a study the command line merges (`tirtrace study --merge`): 4 GiB.
/// Memory: a piece is read as it is parsed, so a stream that is not JSON stops at once, but one
/// that never ends (blanks without end) would not; a piece holds some 2 kB for every point of
/// each of its batches (a three-segment route; more for a long one), so the largest sweep in one
/// piece ([`SWEEP_RAYS`]: 10⁹ rays, 244 141 batches of a point) is some 0.5 GB, and a few GB
/// for a route of many segments.
pub const PIECE_BYTES: u64 = 4 << 30;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn range_ends_open_and_closed() {
        let r = Range::open_closed(0.0, 10.0).unit(" mm");
        assert!(!r.contains(0.0));
        assert!(r.contains(1e-300));
        assert!(r.contains(10.0));
        assert!(!r.contains(10.0 + 1e-12));
        let r = Range::closed_open(0.0, 360.0).unit("°");
        assert!(r.contains(0.0));
        assert!(!r.contains(360.0));
        let r = Range::closed(-1.0, 1.0);
        assert!(r.contains(-1.0) && r.contains(1.0) && !r.contains(-1.5));
        assert_eq!(
            Range::open_closed(0.0, 1000.0)
                .unit(" mm")
                .check("diameter_mm", 0.0),
            Err(FieldError::new(
                "diameter_mm",
                "must be more than 0 mm, got 0"
            ))
        );
        assert_eq!(
            Range::closed_open(0.0, 90.0)
                .unit("°")
                .check("tilt_deg", 90.0),
            Err(FieldError::new("tilt_deg", "must be less than 90°, got 90"))
        );
        assert_eq!(WAVELENGTH_NM.check("wavelength_nm", 2500.0), Ok(2500.0));
        assert_eq!(WAVELENGTH_NM.check("wavelength_nm", 200.0), Ok(200.0));
    }

    #[test]
    fn range_refuses_nan_and_infinities_with_the_rule() {
        let r = Range::closed(0.0, 100_000.0).unit(" mm");
        for (x, got) in [
            (f64::NAN, "not a number"),
            (f64::INFINITY, "infinite"),
            (f64::NEG_INFINITY, "infinite"),
        ] {
            assert!(!r.contains(x));
            assert_eq!(
                r.check("receiver.distance_mm", x).unwrap_err().to_string(),
                format!(
                    "receiver.distance_mm must be at least 0 mm and at most 100000 mm, got {got}"
                )
            );
        }
        // An unbounded range still refuses +∞, and leaves its upper bound out of the rule.
        let r = Range::closed(1.0, f64::INFINITY);
        assert!(r.contains(1e300) && !r.contains(f64::INFINITY));
        assert_eq!(
            r.check("n", f64::INFINITY).unwrap_err().message,
            "must be at least 1, got infinite"
        );
    }

    #[test]
    fn a_refusal_names_the_end_it_breaks_with_the_note_after_the_lower_end() {
        let r = Range::closed(0.0, 12.5)
            .unit(" mm")
            .note(" (where the mount starts)")
            .above(3.0);
        assert_eq!(
            r.check("to_mm", 3.0).unwrap_err().message,
            "must be more than 3 mm (where the mount starts), got 3"
        );
        assert_eq!(
            r.check("to_mm", 13.0).unwrap_err().message,
            "must be at most 12.5 mm, got 13"
        );
        assert_eq!(
            r.rule(),
            "must be more than 3 mm and at most 12.5 mm (where the mount starts)"
        );
        assert_eq!(
            TABLE_INTENSITY.check("v", -1e-9).unwrap_err().message,
            "must be at least 0, got -1e-9"
        );
        assert_eq!(
            FLUX.unit(" lm")
                .check("source.flux.lm", 2e9)
                .unwrap_err()
                .message,
            "must be at most 1e9 lm, got 2e9"
        );
    }

    #[test]
    fn count_ends_are_included() {
        assert!(RAYS.contains(1) && RAYS.contains(1_000_000_000));
        assert!(!RAYS.contains(0) && !RAYS.contains(1_000_000_001));
        assert_eq!(
            RAYS.check("trace.rays", 0).unwrap_err().message,
            "must be a whole number from 1 to 10⁹, got 0"
        );
        assert_eq!(
            Count::new(0, MAX_WHOLE).rule(),
            "must be a whole number from 0 to 2⁵³ − 1"
        );
        assert_eq!(show_count(1_000_000), "1000000");
        assert_eq!(show_count(10_000_000), "10⁷");
        assert_eq!(show_count(12_345_678_901), "1.234568e10");
        assert_eq!(THREADS.check("--threads", 1024), Ok(1024));
    }

    #[test]
    fn paths_are_one_batch() {
        assert_eq!(PATHS.max, crate::trace::BATCH_RAYS);
    }
}
