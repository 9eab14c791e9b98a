//! Where a result's noise comes from: the source points, or the random events along the way.
//!
//! Each seed's batches are traced twice with the same source points — every ray starts and
//! heads as in the other trace — and independent random events (Fresnel draws, the exit face's
//! schedule; [`Prepared::trace_batch_events_redrawn`]). Over many seeds the covariance of the
//! two traces' results is the part of a result's variance that the source points cause,
//! Var(E[X | points]); the rest, E[Var(X | points)], is the events' (the law of total
//! variance). No way of drawing the events — splitting every one of them by expected value,
//! scheduling them — can take away more than the events' part, so total ÷ source part is the
//! most any of them can raise the precision per second, 1/(ci95² × s), at the same speed.
//!
//! It prints, for the share delivered and the leakiest bend's leak, the variance of one trace
//! of BATCHES batches, its two parts with their standard errors (from the spread of the
//! per-seed terms), the variance independent rays without any variance reduction would have,
//! p(1 − p)/n, and that ceiling with the range it spans while the events' share of the variance
//! moves by two standard errors (the delta method over the seeds; unbounded when the share could
//! be all of it);
//! and the spread of the results over the seeds against the variance their 95 % intervals
//! claim (honest intervals give about 1).
//!
//! Usage: `cargo run --release --example variance_parts -- SCENARIO.json BATCHES SEEDS
//! [FIRST_SEED]` (the scenario's own ray count and seed are replaced: seeds FIRST_SEED (1 unless
//! given) onwards, BATCHES whole batches each; about 0.3 s a seed for 10 batches of the
//! benchmark route on one core).
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm

use tirtrace::scenario::Scenario;
use tirtrace::stats::{t_quantile_975, REPLICATE_RAYS};
use tirtrace::trace::{Batch, Prepared, SegmentKind, BATCH_RAYS};

/// The two results followed, the share delivered and segment `bend`'s leak (0 when the route
/// has no bend), and the variances of the mean their 95 % intervals claim.
fn results(p: &Prepared, total: &Batch, bend: Option<usize>) -> ([f64; 2], [f64; 2]) {
    let r = p.report(total);
    let (leak, leak_ci95) = bend.map_or((0.0, 0.0), |b| {
        let g = r.segments[b].leaked;
        (g.share, g.ci95)
    });
    // The intervals are Student's t over the replicates.
    let t = t_quantile_975(total.rays / REPLICATE_RAYS - 1);
    let claimed = |ci95: f64| (ci95 / t) * (ci95 / t);
    (
        [r.delivered.share, leak],
        [claimed(r.delivered.ci95), claimed(leak_ci95)],
    )
}

fn main() {
    let mut args = std::env::args().skip(1);
    let path = args.next().expect("scenario path");
    let batches: u64 = args.next().map_or(10, |s| s.parse().expect("batch count"));
    let seeds: u64 = args.next().map_or(100, |s| s.parse().expect("seed count"));
    let first_seed: u64 = args.next().map_or(1, |s| s.parse().expect("first seed"));
    assert!(seeds >= 3, "at least 3 seeds");
    let mut s = Scenario::from_json(&std::fs::read_to_string(&path).unwrap()).unwrap();
    s.trace.rays = batches * BATCH_RAYS;

    // The leakiest bend, from the first seed's ordinary trace.
    let mut bend = None;
    let mut pairs: Vec<[[f64; 2]; 2]> = Vec::new();
    let mut claimed: Vec<[f64; 2]> = Vec::new();
    for seed in first_seed..first_seed + seeds {
        s.trace.seed = seed;
        let p = Prepared::new(&s).unwrap_or_else(|e| panic!("{e}"));
        let trace = |draw: u64| {
            let mut total = p.trace_batch_events_redrawn(0, draw);
            for b in 1..batches {
                total.merge(&p.trace_batch_events_redrawn(b, draw));
            }
            total
        };
        let (a, b) = (trace(0), trace(1));
        let bend = *bend.get_or_insert_with(|| {
            let r = p.report(&a);
            r.segments
                .iter()
                .filter(|g| g.kind == SegmentKind::Bend)
                .max_by(|x, y| x.leaked.share.total_cmp(&y.leaked.share))
                .map(|g| g.index)
        });
        let ((x, claimed_x), (y, _)) = (results(&p, &a, bend), results(&p, &b, bend));
        pairs.push([x, y]);
        claimed.push(claimed_x);
    }

    let n = pairs.len() as f64;
    let rays = (batches * BATCH_RAYS) as f64;
    println!(
        "{path}: {} seeds of {} rays, each traced twice with the same source points and \
         independent events",
        pairs.len(),
        batches * BATCH_RAYS
    );
    let names = match bend.flatten() {
        Some(b) => vec![
            "delivered".to_string(),
            format!("leakiest bend's leak (segment {})", b + 1),
        ],
        None => vec!["delivered".to_string()],
    };
    for (k, name) in names.iter().enumerate() {
        let x: Vec<f64> = pairs.iter().map(|q| q[0][k]).collect();
        let y: Vec<f64> = pairs.iter().map(|q| q[1][k]).collect();
        let mean = |v: &[f64]| v.iter().sum::<f64>() / n;
        let (mx, my) = (mean(&x), mean(&y));
        // Per seed: the centred products whose means are the variances and the covariance.
        let xx: Vec<f64> = x.iter().map(|a| (a - mx) * (a - mx)).collect();
        let yy: Vec<f64> = y.iter().map(|b| (b - my) * (b - my)).collect();
        let xy: Vec<f64> = x.iter().zip(&y).map(|(a, b)| (a - mx) * (b - my)).collect();
        let total_each: Vec<f64> = xx.iter().zip(&yy).map(|(a, b)| 0.5 * (a + b)).collect();
        let events_each: Vec<f64> = total_each.iter().zip(&xy).map(|(t, c)| t - c).collect();
        let unbiased = n / (n - 1.0);
        // The mean of per-seed values and its standard error.
        let with_se = |v: &[f64]| {
            let m = mean(v);
            let var = v.iter().map(|a| (a - m) * (a - m)).sum::<f64>() / (n - 1.0);
            (m * unbiased, (var / n).sqrt() * unbiased)
        };
        let (total, total_se) = with_se(&total_each);
        let (source, source_se) = with_se(&xy);
        let (events, events_se) = with_se(&events_each);
        let share = 0.5 * (mx + my);
        let binomial = share * (1.0 - share) / rays;
        println!("{name}: mean {:.4} %", 100.0 * share);
        println!(
            "  variance of one trace        {total:.3e} ± {total_se:.1e}  ({:.3} of independent rays' {binomial:.3e})",
            total / binomial
        );
        println!(
            "  from the source points       {source:.3e} ± {source_se:.1e}  ({:.0} %)",
            100.0 * source / total
        );
        println!(
            "  from the events              {events:.3e} ± {events_se:.1e}  ({:.0} %)",
            100.0 * events / total
        );
        // The ceiling 1/(1 − f) from the events' share f = events/total, a ratio of two means
        // over the same seeds whose numerator and denominator move together; its standard
        // error by the delta method, from the per-seed terms e − f·t.
        let f = events / total;
        let resid: Vec<f64> = events_each
            .iter()
            .zip(&total_each)
            .map(|(e, t)| e - f * t)
            .collect();
        let (_, resid_se) = with_se(&resid);
        let f_se = resid_se / total;
        let ceiling = |f: f64| {
            if f < 1.0 {
                format!("{:.2}x", 1.0 / (1.0 - f.max(0.0)))
            } else {
                "unbounded".to_string()
            }
        };
        println!(
            "  most any way of drawing the events can raise its precision per second: {} \
             ({} to {} with the events' share {:.1} % ± {:.1} % two standard errors down or up)",
            ceiling(f),
            ceiling(f - 2.0 * f_se),
            ceiling(f + 2.0 * f_se),
            100.0 * f,
            200.0 * f_se,
        );
        // The intervals' honesty: the spread of the results over the seeds against the
        // variance their intervals claim (tests/coverage.rs asks 0.75-1.33 of its scenarios).
        let claimed_mean = claimed.iter().map(|c| c[k]).sum::<f64>() / n;
        println!(
            "  spread over the seeds / the variance the intervals claim: {:.2}",
            total / claimed_mean
        );
    }
}
