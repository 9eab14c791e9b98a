//! tirtrace command line: batch runs of the core on design and scenario documents (native only;
//! `main.rs` explains why).

use std::io::{BufReader, IsTerminal, Read, Write};
use std::process::ExitCode;

use clap::error::ErrorKind;
use clap::{Args, Parser, Subcommand};
use tirtrace::limits::{
    Count, DOCUMENT_BYTES, MAX_WHOLE, PATHS, PATH_POINTS, PATH_POINTS_TOTAL, PIECE_BYTES, RAYS,
    THREADS,
};
use tirtrace::problems::Problem;
use tirtrace::quick::QuickDesign;
use tirtrace::scenario::Scenario;
use tirtrace::study::{Plan, Study};
use tirtrace::trace::{path_points_each, Batch, Prepared, TraceReport, BATCH_RAYS};
use tirtrace::FieldError;

// Paths are kept from the first batch only.
const _: () = assert!(PATHS.max == BATCH_RAYS);

#[derive(Parser)]
#[command(
    name = "tirtrace",
    version,
    about = "Light-guide calculator: closed-form figures and Monte Carlo ray traces of light \
             pipes and plastic fibres"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Print the closed-form figures (critical angle, NA, acceptance, leak-free bend radius) of a
    /// quick-look design document as JSON.
    Figures {
        /// The design document (JSON); `-` reads standard input.
        file: String,
    },
    /// List the built-in materials with their sources and wavelength ranges as JSON.
    Materials,
    /// Validate a scenario and print its closed-form figures (indices, critical angle, NA,
    /// acceptance, launch, and for every bend its radii and leak-free verdict) as JSON, without
    /// tracing.
    Check {
        /// The scenario document (JSON); `-` reads standard input.
        file: String,
    },
    /// Trace a scenario and print the report (energy budget, per-segment losses, maps) as JSON,
    /// or the budget and loss tables as CSV.
    Trace(TraceArgs),
    /// Run a design study on the scenario it holds, with the same rays wherever the scenario
    /// is traced (common random numbers). A sweep (`vary`) prints per point the delivered share,
    /// its difference to the first traced point, the budget and each segment's leakage, as JSON
    /// or CSV. A search (`find`) prints the smallest or largest value meeting a criterion with
    /// its 95 % interval, and every evaluated value.
    #[command(visible_alias = "sweep")]
    Study(StudyArgs),
    /// Print the JSON Schema of a document, for an editor to check and complete it with
    /// (`docs/SCHEMA.md`).
    Schema {
        /// The document.
        #[arg(value_parser = schema_names())]
        document: String,
    },
}

#[derive(Args)]
struct StudyArgs {
    /// The study document (JSON); `-` reads standard input.
    file: String,
    #[command(flatten)]
    run: RunArgs,
    /// Print CSV instead (for a sweep: one row per point, units in the header; for a search: one
    /// row per evaluated value).
    #[arg(long)]
    csv: bool,
    /// Trace only piece K of N of a sweep or a tolerance study (an even share of its batches)
    /// and print the piece (JSON) for --merge, e.g. one piece per task of a job runner.
    #[arg(long, value_name = "K/N", conflicts_with_all = ["merge", "csv"])]
    piece: Option<String>,
    /// Merge the pieces traced with --piece (every piece, each once, in any order) and print
    /// the report: the same, bit for bit, as tracing the whole study here.
    #[arg(long, value_name = "PIECE.json", num_args = 1..)]
    merge: Vec<String>,
}

/// The trace settings `trace` and `study` take from the command line.
#[derive(Args)]
struct RunArgs {
    // Number of rays (per point of a study); the help names the range of limits::RAYS.
    #[arg(
        long,
        value_name = "N",
        allow_negative_numbers = true,
        help = format!("Number of rays, per point or variant in a study (overrides the scenario's trace.rays; {} to {})", RAYS.min, RAYS.max)
    )]
    rays: Option<String>,
    /// Seed of the random sequence, shared by every point of a study (overrides the scenario's
    /// trace.seed).
    #[arg(long, value_name = "N", allow_negative_numbers = true)]
    seed: Option<String>,
    /// Worker threads, 0 for all cores. Results are identical for any thread count.
    #[arg(long = "threads", value_name = "N", allow_negative_numbers = true)]
    threads_given: Option<String>,
    /// The thread count read from `--threads` by [`RunArgs::apply`] (0: all cores).
    #[arg(skip)]
    threads: usize,
}

/// A whole-number option's value: digits, or any number that is a whole one (`1e5`, `2.0`);
/// anything else, or a number out of `count`, is refused naming the option and its range.
fn whole_option(option: &str, text: &str, count: Count, note: &str) -> Result<u64, String> {
    let refused = || {
        let shown: String = text.chars().take(24).collect();
        let cut = if shown.len() < text.len() { "…" } else { "" };
        format!("{option} {}{note}, got “{shown}{cut}”", count.rule())
    };
    let t = text.trim();
    let n = match t.parse::<u64>() {
        Ok(n) => n,
        Err(_) => {
            let x: f64 = t.parse().map_err(|_| refused())?;
            if !(x.is_finite() && x.fract() == 0.0 && x >= 0.0 && x <= MAX_WHOLE as f64) {
                return Err(refused());
            }
            x as u64
        }
    };
    if count.contains(n) {
        Ok(n)
    } else {
        Err(refused())
    }
}

impl RunArgs {
    /// Set the scenario's trace settings from the options given; a problem names the option
    /// and its allowed range.
    fn apply(&mut self, trace: &mut tirtrace::scenario::TraceSettings) -> Result<(), String> {
        if let Some(rays) = &self.rays {
            trace.rays = whole_option("--rays", rays, RAYS, "")?;
        }
        if let Some(seed) = &self.seed {
            trace.seed = whole_option("--seed", seed, Count::new(0, MAX_WHOLE), "")?;
        }
        if let Some(threads) = &self.threads_given {
            self.threads =
                whole_option("--threads", threads, THREADS, " (0 = all cores)")? as usize;
        }
        Ok(())
    }
}

/// The documents `tirtrace schema` can print.
fn schema_names() -> clap::builder::PossibleValuesParser {
    tirtrace::schema::DOCUMENTS
        .iter()
        .map(|(name, _)| *name)
        .into()
}

#[derive(Args)]
struct TraceArgs {
    /// The scenario document (JSON); `-` reads standard input.
    file: String,
    #[command(flatten)]
    run: RunArgs,
    // Sampled ray paths; the help names the range of limits::PATHS.
    #[arg(
        long,
        value_name = "N",
        allow_negative_numbers = true,
        help = format!("Include N sampled ray paths in the JSON report ({} to {})", PATHS.min, PATHS.max)
    )]
    paths: Option<String>,
    /// Print CSV instead: the budget (mechanism, share, ci95), then the per-segment table, then
    /// the contacts, then the light turned back at the exit face and where it ended.
    #[arg(long)]
    csv: bool,
}

/// The name of a file in messages: the file, or standard input for `-`.
fn input_name(file: &str) -> &str {
    if file == "-" {
        "standard input"
    } else {
        file
    }
}

/// A file, or standard input for `-`, to read from.
fn open_input(file: &str) -> Result<Box<dyn Read>, String> {
    if file == "-" {
        Ok(Box::new(std::io::stdin().lock()))
    } else {
        let f = std::fs::File::open(file).map_err(|e| format!("could not read {file}: {e}"))?;
        Ok(Box::new(f))
    }
}

/// `limit` bytes in MiB, for messages.
fn mib(limit: u64) -> String {
    format!("{} MiB", limit >> 20)
}

/// A document's text from a file or standard input (`-`), without a leading byte-order mark.
/// At most [`DOCUMENT_BYTES`] are read: a larger input (or one that never ends, `/dev/zero`) is
/// refused, naming the file.
fn read_text(file: &str) -> Result<String, String> {
    let name = input_name(file);
    let mut bytes = Vec::new();
    open_input(file)?
        .take(DOCUMENT_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| format!("could not read {name}: {e}"))?;
    if bytes.len() as u64 > DOCUMENT_BYTES {
        return Err(format!(
            "could not read {name}: it is larger than {}, the most the command line reads of a \
             document (a scenario or a study is a few kB)",
            mib(DOCUMENT_BYTES)
        ));
    }
    let text = String::from_utf8(bytes)
        .map_err(|_| format!("could not read {name}: stream did not contain valid UTF-8"))?;
    Ok(tirtrace::problems::without_bom(&text).to_string())
}

/// A reader of `r` without the byte-order mark it may start with.
fn skip_bom(mut r: impl Read) -> std::io::Result<impl Read> {
    const BOM: &[u8] = "\u{feff}".as_bytes();
    let mut head = Vec::with_capacity(BOM.len());
    (&mut r).take(BOM.len() as u64).read_to_end(&mut head)?;
    if head == BOM {
        head.clear();
    }
    Ok(std::io::Cursor::new(head).chain(r))
}

/// The first problem, with a count of the others.
fn first_problem(problems: &[FieldError]) -> String {
    match problems {
        [] => "invalid document".to_string(),
        [first] => first.to_string(),
        [first, rest @ ..] => format!("{first} (and {} more problem(s))", rest.len()),
    }
}

fn read_scenario(file: &str) -> Result<Scenario, String> {
    let text = read_text(file)?;
    Scenario::from_json(&text).map_err(|e| e.to_string())
}

fn check(file: &str) -> Result<String, String> {
    let scenario = read_scenario(file)?;
    let figures = tirtrace::check::figures(&scenario).map_err(|p| first_problem(&p))?;
    serde_json::to_string_pretty(&figures).map_err(|e| e.to_string())
}

/// The trace report as pretty JSON. The core leaves `paths` out when none were kept; with
/// `--paths 0` an empty list is printed, so asking for paths always gives the key.
fn report_json(report: &TraceReport, with_paths: bool) -> Result<String, String> {
    let mut value = serde_json::to_value(report).map_err(|e| e.to_string())?;
    if with_paths {
        if let Some(obj) = value.as_object_mut() {
            obj.entry("paths")
                .or_insert_with(|| serde_json::Value::Array(Vec::new()));
        }
    }
    serde_json::to_string_pretty(&value).map_err(|e| e.to_string())
}

/// Trace every batch in parallel (merged in batch order by the core, so the result does not
/// depend on the thread count); `progress` gets the rays traced so far.
fn trace_all(
    prepared: &Prepared,
    threads: usize,
    keep_paths: usize,
    progress: impl FnMut(u64),
) -> Result<Batch, String> {
    prepared
        .trace_all_parallel_with_progress(threads, keep_paths, progress)
        .map_err(|e| format!("--threads: could not start {threads} threads: {e}"))
}

/// A note when kept paths were cut short ([`PATH_POINTS`], [`PATH_POINTS_TOTAL`]).
fn cut_paths_note(report: &TraceReport) -> Option<String> {
    let cut = report.paths.iter().filter(|p| p.cut_short).count();
    (cut > 0).then(|| {
        format!(
            "note: {cut} of the {} kept paths are cut short after their first {} points (\"cut_short\": \
             true); a path keeps at most {PATH_POINTS} points, and all of them together {PATH_POINTS_TOTAL}",
            report.paths.len(),
            path_points_each(report.paths.len()),
        )
    })
}

fn trace(mut args: TraceArgs) -> Result<String, String> {
    let mut scenario = read_scenario(&args.file)?;
    args.run.apply(&mut scenario.trace)?;
    // The options are checked by the scenario's own ranges and reported under their names.
    let problems: Vec<FieldError> = scenario
        .problems()
        .into_iter()
        .map(|mut p| {
            if p.field == "trace.rays" && args.run.rays.is_some() {
                p.field = "--rays".to_string();
            }
            p
        })
        .collect();
    if !problems.is_empty() {
        return Err(first_problem(&problems));
    }
    let paths = match &args.paths {
        Some(text) => Some(whole_option(
            "--paths",
            text,
            PATHS,
            " (paths come from the first batch of rays)",
        )? as usize),
        None => None,
    };
    let prepared = Prepared::new(&scenario).map_err(|e| e.to_string())?;
    let total_rays = scenario.trace.rays;
    let show = std::io::stderr().is_terminal();
    let batch = trace_all(&prepared, args.run.threads, paths.unwrap_or(0), |done| {
        if show {
            let mut e = std::io::stderr().lock();
            let _ = write!(e, "\rtirtrace: traced {done} of {total_rays} rays");
            if done >= total_rays {
                let _ = writeln!(e);
            }
            let _ = e.flush();
        }
    })?;
    let report = prepared.report(&batch);
    if let Some(note) = cut_paths_note(&report) {
        eprintln!("tirtrace: {note}");
    }
    if args.csv {
        // `main` adds the final newline.
        let csv = tirtrace::export::report_csv(&report, &scenario.name);
        Ok(csv.strip_suffix('\n').unwrap_or(&csv).to_string())
    } else {
        report_json(&report, paths.is_some())
    }
}

/// The first problem of a study, with a count of the others.
fn first_study_problem(problems: &[Problem]) -> String {
    match problems {
        [] => "invalid study".to_string(),
        [first] => first.message.clone(),
        [first, rest @ ..] => format!("{} (and {} more problem(s))", first.message, rest.len()),
    }
}

/// `tirtrace study`: read the study, apply the command line's trace settings, run its plan.
fn study(mut args: StudyArgs) -> Result<String, String> {
    let text = read_text(&args.file)?;
    let mut study = Study::from_json(&text).map_err(|p| first_study_problem(&p))?;
    args.run.apply(&mut study.scenario.trace)?;
    // The command line's seed is named as the user gave it.
    let refused = |problems: Vec<Problem>| {
        let problems: Vec<Problem> = problems
            .into_iter()
            .map(|mut p| {
                if p.field == "scenario.trace.seed" && args.run.seed.is_some() {
                    p.message = p.message.replacen("trace.seed", "--seed", 1);
                }
                p
            })
            .collect();
        first_study_problem(&problems)
    };
    match &study.plan {
        Plan::Sweep(_) => sweep(&study, &text, &args, refused),
        Plan::Find(_) => find(&study, &args, refused),
        Plan::Tolerance(_) => tolerance(&study, &text, &args, refused),
    }
}

/// A search's report (`find`).
fn find(
    study: &Study,
    args: &StudyArgs,
    refused: impl Fn(Vec<Problem>) -> String,
) -> Result<String, String> {
    if args.piece.is_some() || !args.merge.is_empty() {
        return Err(
            "--piece and --merge split sweeps and tolerance studies only: a search chooses each value it \
                    traces from the last ones, so it runs whole (spread it over cores with \
                    --threads)"
                .to_string(),
        );
    }
    let find = study.prepare_find().map_err(refused)?;
    let report = find.run_parallel(args.run.threads).map_err(|e| {
        format!(
            "--threads: could not start {} threads: {e}",
            args.run.threads
        )
    })?;
    if args.csv {
        let csv = tirtrace::study::find::report_csv(&report);
        Ok(csv.strip_suffix('\n').unwrap_or(&csv).to_string())
    } else {
        serde_json::to_string_pretty(&report).map_err(|e| e.to_string())
    }
}

/// A tolerance study's report (`tolerances`).
fn tolerance(
    study: &Study,
    text: &str,
    args: &StudyArgs,
    refused: impl Fn(Vec<Problem>) -> String,
) -> Result<String, String> {
    let tolerance = study.prepare_tolerance().map_err(refused)?;
    if args.piece.is_some() || !args.merge.is_empty() {
        return match in_pieces(
            args,
            &traced_study(study, text)?,
            |doc, k, n| tolerance.piece(doc, k, n),
            |doc, pieces, names| tolerance.merge_pieces(doc, pieces, names),
        )? {
            InPieces::Piece(json) => Ok(json),
            InPieces::Merged(merged) => tolerance_output(&tolerance, &merged, args.csv),
        };
    }
    let merged = tolerance
        .trace_all_parallel(
            args.run.threads,
            progress_line(tolerance.batch_count(), "variant"),
        )
        .map_err(|e| {
            format!(
                "--threads: could not start {} threads: {e}",
                args.run.threads
            )
        })?;
    tolerance_output(&tolerance, &merged, args.csv)
}

/// A tolerance study's report of merged batches, as JSON or CSV.
fn tolerance_output(
    tolerance: &tirtrace::study::Tolerance,
    merged: &tirtrace::study::ToleranceBatch,
    csv: bool,
) -> Result<String, String> {
    let report = tolerance.report(merged);
    if csv {
        let csv = tirtrace::study::tolerance::report_csv(&report);
        Ok(csv.strip_suffix('\n').unwrap_or(&csv).to_string())
    } else {
        serde_json::to_string_pretty(&report).map_err(|e| e.to_string())
    }
}

/// The study as traced (kept in its pieces): the document with the rays and seed used.
fn traced_study(study: &Study, text: &str) -> Result<serde_json::Value, String> {
    let mut doc: serde_json::Value = serde_json::from_str(text).map_err(|e| e.to_string())?;
    doc["scenario"]["trace"]["rays"] = study.scenario.trace.rays.into();
    doc["scenario"]["trace"]["seed"] = study.scenario.trace.seed.into();
    Ok(doc)
}

/// What `--piece` or `--merge` asked for: one piece traced (its JSON), or the pieces merged.
enum InPieces<B> {
    Piece(String),
    Merged(B),
}

/// `--piece K/N`: trace that piece with `piece`; `--merge`: read the pieces and merge them with
/// `merge`. `doc` is the study as traced ([`traced_study`]).
fn in_pieces<B: serde::Serialize + serde::de::DeserializeOwned>(
    args: &StudyArgs,
    doc: &serde_json::Value,
    piece: impl Fn(&serde_json::Value, u64, u64) -> Result<tirtrace::study::pieces::Piece<B>, String>,
    merge: impl Fn(
        &serde_json::Value,
        &[tirtrace::study::pieces::Piece<B>],
        &[String],
    ) -> Result<B, String>,
) -> Result<InPieces<B>, String> {
    if let Some(text) = &args.piece {
        let (k, n) = piece_k_of_n(text)?;
        let piece = piece(doc, k, n).map_err(|m| format!("--piece {m}"))?;
        return serde_json::to_string(&piece)
            .map(InPieces::Piece)
            .map_err(|e| e.to_string());
    }
    let pieces = read_pieces(&args.merge)?;
    merge(doc, &pieces, &args.merge).map(InPieces::Merged)
}

/// The progress line of a long study on a terminal (nothing when standard error is not one):
/// "traced D of B batches of every {unit}", ended by a new line at the last batch.
fn progress_line(batches: u64, unit: &'static str) -> impl FnMut(u64) {
    let show = std::io::stderr().is_terminal();
    move |done| {
        if show {
            let mut e = std::io::stderr().lock();
            let _ = write!(
                e,
                "\rtirtrace: traced {done} of {batches} batches of every {unit}"
            );
            if done >= batches {
                let _ = writeln!(e);
            }
            let _ = e.flush();
        }
    }
}

/// `--piece K/N` read.
fn piece_k_of_n(piece: &str) -> Result<(u64, u64), String> {
    piece
        .split_once('/')
        .and_then(|(k, n)| Some((k.trim().parse().ok()?, n.trim().parse().ok()?)))
        .ok_or_else(|| format!("--piece must be K/N with 1 ≤ K ≤ N (piece K of N), got {piece}"))
}

/// The pieces named by `--merge`, read. Each is parsed as it is read (a file that is not JSON
/// stops at its first byte), and at most [`PIECE_BYTES`] of it.
fn read_pieces<B: serde::de::DeserializeOwned>(
    names: &[String],
) -> Result<Vec<tirtrace::study::pieces::Piece<B>>, String> {
    let mut pieces = Vec::with_capacity(names.len());
    for file in names {
        let name = input_name(file);
        let mut limited = open_input(file)?.take(PIECE_BYTES + 1);
        let piece = skip_bom(BufReader::new(&mut limited))
            .map_err(serde_json::Error::io)
            .and_then(serde_json::from_reader);
        if limited.limit() == 0 {
            return Err(format!(
                "could not read {name}: it is larger than {}, the most the command line reads of \
                 a piece",
                mib(PIECE_BYTES)
            ));
        }
        let piece =
            piece.map_err(|e| format!("{name} could not be read as a piece of this study: {e}"))?;
        pieces.push(piece);
    }
    Ok(pieces)
}

/// A sweep's report (`vary`).
fn sweep(
    study: &Study,
    text: &str,
    args: &StudyArgs,
    refused: impl Fn(Vec<Problem>) -> String,
) -> Result<String, String> {
    let sweep = study.prepare_sweep().map_err(refused)?;
    if args.piece.is_some() || !args.merge.is_empty() {
        return match in_pieces(
            args,
            &traced_study(study, text)?,
            |doc, k, n| sweep.piece(doc, k, n),
            |doc, pieces, names| sweep.merge_pieces(doc, pieces, names),
        )? {
            InPieces::Piece(json) => Ok(json),
            InPieces::Merged(merged) => sweep_output(&sweep, &merged, args.csv),
        };
    }
    let merged = sweep
        .trace_all_parallel(
            args.run.threads,
            progress_line(sweep.batch_count(), "point"),
        )
        .map_err(|e| {
            format!(
                "--threads: could not start {} threads: {e}",
                args.run.threads
            )
        })?;
    sweep_output(&sweep, &merged, args.csv)
}

/// A sweep's report of merged batches, as JSON or CSV.
fn sweep_output(
    sweep: &tirtrace::study::Sweep,
    merged: &tirtrace::study::SweepBatch,
    csv: bool,
) -> Result<String, String> {
    let report = sweep.report(merged);
    if csv {
        let csv = tirtrace::study::sweep::report_csv(&report);
        Ok(csv.strip_suffix('\n').unwrap_or(&csv).to_string())
    } else {
        serde_json::to_string_pretty(&report).map_err(|e| e.to_string())
    }
}

fn run(cli: Cli) -> Result<String, String> {
    match cli.command {
        Command::Figures { file } => {
            let text = read_text(&file)?;
            let design = QuickDesign::from_json(&text).map_err(|e| e.to_string())?;
            let problems = design.problems();
            if !problems.is_empty() {
                return Err(first_problem(&problems));
            }
            let figures = design.figures().map_err(|e| e.to_string())?;
            serde_json::to_string_pretty(&figures).map_err(|e| e.to_string())
        }
        Command::Materials => serde_json::to_string_pretty(&tirtrace::index::library::materials())
            .map_err(|e| e.to_string()),
        Command::Check { file } => check(&file),
        Command::Trace(args) => trace(args),
        Command::Study(args) => study(args),
        Command::Schema { document } => tirtrace::schema::schema_json(&document)
            .map(|s| s.trim_end().to_string())
            .ok_or_else(|| format!("no schema named {document}")),
    }
}

/// Run the command line with the process's arguments.
pub fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            if matches!(e.kind(), ErrorKind::DisplayHelp | ErrorKind::DisplayVersion) {
                let _ = e.print();
                return ExitCode::SUCCESS;
            }
            if e.kind() == ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand {
                let _ = e.print();
                return ExitCode::from(2);
            }
            // One line, like every other error: clap's first paragraph without its "error: ".
            let text = e.render().to_string();
            let line = text
                .trim_start()
                .lines()
                .take_while(|l| !l.trim().is_empty())
                .map(str::trim)
                .collect::<Vec<_>>()
                .join(" ");
            let line = line.strip_prefix("error: ").unwrap_or(&line);
            eprintln!("tirtrace: {line}");
            return ExitCode::from(2);
        }
    };
    match run(cli) {
        Ok(out) => {
            // A reader that stops early (`| head`) closes the pipe: that is not an error of ours,
            // and `println!` would panic on it.
            use std::io::Write;
            match writeln!(std::io::stdout().lock(), "{out}") {
                Err(e) if e.kind() != std::io::ErrorKind::BrokenPipe => {
                    eprintln!("tirtrace: could not write the output: {e}");
                    ExitCode::FAILURE
                }
                _ => ExitCode::SUCCESS,
            }
        }
        Err(msg) => {
            eprintln!("tirtrace: {msg}");
            ExitCode::FAILURE
        }
    }
}
