//! Monte Carlo over the tolerance box: seeded, reproducible samples,
//! evaluated 64 at a time on every core, summarised as JCGM 101:2008
//! (GUM Supplement 1) reports them — mean, standard deviation, the
//! probabilistically symmetric coverage interval from the sorted samples
//! (§7.7), percentiles and a histogram.

use num_complex::Complex64 as C64;
use rayon::prelude::*;

use super::{Measure, Plan};
use crate::engine::block::LANES;
use crate::engine::tolerance::{Direction, Law};

/// A small, fast generator with a fixed algorithm, so a seed gives the
/// same samples on every machine and in every version: SplitMix64
/// (Steele, Lea & Flood, "Fast splittable pseudorandom number generators",
/// OOPSLA 2014).
#[derive(Clone, Debug)]
pub struct Rng(u64);

impl Rng {
    pub fn new(seed: u64) -> Rng {
        Rng(seed)
    }
    /// The generator for block `b` of a run seeded `seed`: blocks are
    /// independent of how they are shared out among threads.
    pub fn for_block(seed: u64, b: u64) -> Rng {
        let mut r = Rng(seed ^ b.wrapping_mul(0xD1B5_4A32_D192_ED03));
        r.next_u64();
        r
    }
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform on [0, 1), 53 bits.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }
    /// Standard normal (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        let u1 = 1.0 - self.uniform(); // (0, 1]
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
    }
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct McOptions {
    /// Number of samples (M in JCGM 101).
    pub samples: usize,
    pub seed: u64,
    /// Histogram bins.
    pub bins: usize,
    /// Coverage probability of the interval reported (0.95).
    pub coverage: f64,
}

impl Default for McOptions {
    fn default() -> McOptions {
        McOptions {
            samples: 10_000,
            seed: 1,
            bins: 40,
            coverage: 0.95,
        }
    }
}

/// Equal-width bins from `lo` to `hi`.
#[derive(Clone, Debug, PartialEq)]
pub struct Histogram {
    pub lo: f64,
    pub hi: f64,
    pub counts: Vec<u64>,
}

/// One shown cell's samples, summarised (coherent SI units, of its
/// measure: its value or its magnitude).
#[derive(Clone, Debug, PartialEq)]
pub struct McCell {
    pub name: String,
    pub measure: Measure,
    /// The measure at the stated inputs.
    pub nominal: f64,
    pub mean: f64,
    /// Standard deviation of the samples (divisor M − 1).
    pub std_dev: f64,
    pub min: f64,
    pub max: f64,
    /// `(p, value)`: the ⌈pM⌉-th smallest sample, for p in `PERCENTILES`.
    pub percentiles: Vec<(f64, f64)>,
    /// The probabilistically symmetric coverage interval (JCGM 101 §7.7).
    pub coverage: (f64, f64),
    pub histogram: Histogram,
    /// For a complex cell: the mean and standard deviation of its angle
    /// (radians), taken about the stated value's angle so it never wraps.
    pub angle: Option<(f64, f64)>,
    /// Samples whose value is not a number (left out of the statistics).
    pub undefined: usize,
}

#[derive(Clone, Debug, PartialEq)]
pub struct McResult {
    pub samples: usize,
    pub seed: u64,
    pub coverage_probability: f64,
    pub cells: Vec<McCell>,
}

/// The percentiles reported.
pub const PERCENTILES: &[f64] = &[0.01, 0.05, 0.5, 0.95, 0.99];

/// Samples per parallel task: a whole number of blocks of 64, each drawn
/// from its own stream, so the samples do not depend on the tasks.
const TASK: usize = LANES * 64;

/// Draw one sample's inputs into `out` (`p`: scratch, one offset per
/// direction of the box).
fn draw(plan: &Plan, rng: &mut Rng, p: &mut [f64], out: &mut [C64]) {
    for (x, d) in p.iter_mut().zip(&plan.dims) {
        let s = &plan.inputs[d.input].spread;
        *x = match (d.dir, &s.law) {
            (Direction::Choice, Law::Among(v)) => ((rng.uniform() * v.len() as f64) as usize).min(v.len() - 1) as f64,
            (_, Law::Normal { .. }) => rng.normal() * s.std_dev(d.dir),
            _ => d.lo + (d.hi - d.lo) * rng.uniform(),
        };
    }
    plan.values_into(p, out);
}

/// The measures of `opt.samples` samples, one column per shown value (in
/// sample order), as `monte_carlo` draws them.
pub fn measures(plan: &Plan, opt: &McOptions) -> Vec<Vec<f64>> {
    sample_all(plan, opt).0
}

/// Run `opt.samples` samples of the box and summarise each shown cell.
pub fn monte_carlo(plan: &Plan, opt: &McOptions) -> McResult {
    let n = opt.samples.max(1);
    let (meas, angs) = sample_all(plan, opt);
    let cells = plan
        .shown
        .par_iter()
        .zip(meas.into_par_iter().zip(angs.into_par_iter()))
        .map(|(s, (mut col, ang))| {
            let base = if s.nominal.norm() > 0.0 { s.nominal.arg() } else { 0.0 };
            let angle = (s.measure == Measure::Magnitude).then(|| {
                let a: Vec<f64> = ang
                    .iter()
                    .zip(&col)
                    .filter(|(_, m)| m.is_finite())
                    .map(|(a, _)| *a)
                    .collect();
                let (m, sd) = mean_std(&a);
                (base + m, sd)
            });
            drop(ang);
            col.retain(|x| x.is_finite());
            let undefined = n - col.len();
            summarise(
                s.series.name.clone(),
                s.measure,
                s.measure.of(s.nominal),
                &mut col,
                opt,
                undefined,
                angle,
            )
        })
        .collect();
    McResult {
        samples: n,
        seed: opt.seed,
        coverage_probability: opt.coverage,
        cells,
    }
}

/// Each shown value's measures, a column per value, and for a value
/// judged by its magnitude the angles about its stated one (empty for the
/// others).
fn sample_all(plan: &Plan, opt: &McOptions) -> (Vec<Vec<f64>>, Vec<Vec<f64>>) {
    let n = opt.samples.max(1);
    let k = plan.shown.len();
    let mut meas: Vec<Vec<f64>> = (0..k).map(|_| vec![0.0; n]).collect();
    let mut angs: Vec<Vec<f64>> = plan
        .shown
        .iter()
        .map(|s| {
            if s.measure == Measure::Magnitude {
                vec![0.0; n]
            } else {
                Vec::new()
            }
        })
        .collect();
    // Each task gets its stretch of every column.
    type Stretch<'a> = (Vec<&'a mut [f64]>, Vec<&'a mut [f64]>);
    let mut tasks: Vec<Stretch> = (0..n.div_ceil(TASK))
        .map(|_| (Vec::with_capacity(k), Vec::with_capacity(k)))
        .collect();
    for col in meas.iter_mut() {
        for (t, ch) in col.chunks_mut(TASK).enumerate() {
            tasks[t].0.push(ch);
        }
    }
    for col in angs.iter_mut() {
        if col.is_empty() {
            for t in tasks.iter_mut() {
                t.1.push(Default::default());
            }
        } else {
            for (t, ch) in col.chunks_mut(TASK).enumerate() {
                tasks[t].1.push(ch);
            }
        }
    }
    // The turn that takes each stated value to the real axis.
    let unturn: Vec<C64> = plan
        .shown
        .iter()
        .map(|s| {
            let r = s.nominal.norm();
            if r > 0.0 && r.is_finite() {
                s.nominal.conj() / r
            } else {
                C64::new(1.0, 0.0)
            }
        })
        .collect();
    tasks.into_par_iter().enumerate().for_each_init(
        || {
            (
                plan.block(),
                vec![vec![C64::new(0.0, 0.0); plan.inputs.len()]; LANES],
                vec![0.0; plan.dims.len()],
            )
        },
        |(block, ins, p), (t, (mut m, mut a))| {
            let len = (n - t * TASK).min(TASK);
            for (j, start) in (0..len).step_by(LANES).enumerate() {
                let lanes = (len - start).min(LANES);
                let mut rng = Rng::for_block(opt.seed, (t * (TASK / LANES) + j) as u64);
                for v in ins.iter_mut().take(lanes) {
                    draw(plan, &mut rng, p, v);
                }
                plan.run_inputs(block, &ins[..lanes]);
                for (c, s) in plan.shown.iter().enumerate() {
                    let out = &mut m[c][start..start + lanes];
                    if s.check.is_some() {
                        for (l, o) in out.iter_mut().enumerate() {
                            *o = s.measure.of(plan.lane_value(block, c, l));
                        }
                        continue;
                    }
                    let (re, im) = block.lanes(s.series.slot);
                    match s.measure {
                        Measure::Value => out.copy_from_slice(&re[..lanes]),
                        Measure::Magnitude => {
                            let ang = &mut a[c][start..start + lanes];
                            for l in 0..lanes {
                                let z = C64::new(re[l], im[l]);
                                out[l] = crate::engine::ops::abs(z);
                                ang[l] = (z * unturn[c]).arg();
                            }
                        }
                    }
                }
            }
        },
    );
    (meas, angs)
}

fn mean_std(x: &[f64]) -> (f64, f64) {
    if x.is_empty() {
        return (f64::NAN, f64::NAN);
    }
    // Equal samples: their value, exactly (a sum would round).
    if x.iter().all(|v| *v == x[0]) {
        return (x[0], 0.0);
    }
    // Two passes: the mean, then squares about it (no cancellation).
    let m = x.iter().sum::<f64>() / x.len() as f64;
    if x.len() < 2 {
        return (m, 0.0);
    }
    let v = x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (x.len() - 1) as f64;
    (m, v.sqrt())
}

fn summarise(
    name: String,
    measure: Measure,
    nominal: f64,
    col: &mut [f64],
    opt: &McOptions,
    undefined: usize,
    angle: Option<(f64, f64)>,
) -> McCell {
    let (mean, std_dev) = mean_std(col);
    let (min, max) = if col.is_empty() {
        (f64::NAN, f64::NAN)
    } else {
        col.iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| (a.min(x), b.max(x)))
    };
    let bins = opt.bins.max(1);
    let mut counts = vec![0u64; bins];
    if max > min {
        let w = (max - min) / bins as f64;
        for &x in col.iter() {
            let b = (((x - min) / w) as usize).min(bins - 1);
            counts[b] += 1;
        }
    } else if !col.is_empty() {
        counts[0] = col.len() as u64;
    }
    // The order statistics wanted, found by selection rather than a whole
    // sort: each selection leaves the larger samples after its place, so
    // the next one searches only those.
    let m = col.len();
    let (c_lo, c_hi) = coverage_ranks(m, opt.coverage);
    let mut ranks: Vec<usize> = PERCENTILES
        .iter()
        .map(|&p| order_rank(m, p))
        .chain([c_lo, c_hi])
        .collect();
    ranks.sort_unstable();
    ranks.dedup();
    let mut at = vec![f64::NAN; ranks.len()];
    let mut from = 0;
    for (k, &r) in ranks.iter().enumerate() {
        if r == 0 || r > m {
            continue;
        }
        let i = r - 1;
        col[from..].select_nth_unstable_by(i - from, f64::total_cmp);
        at[k] = col[i];
        from = i + 1;
    }
    let value = |r: usize| ranks.iter().position(|&x| x == r).map_or(f64::NAN, |k| at[k]);
    let percentiles = PERCENTILES.iter().map(|&p| (p, value(order_rank(m, p)))).collect();
    let coverage = (value(c_lo), value(c_hi));
    McCell {
        name,
        measure,
        nominal,
        mean,
        std_dev,
        min,
        max,
        percentiles,
        coverage,
        histogram: Histogram {
            lo: min,
            hi: max,
            counts,
        },
        angle,
        undefined,
    }
}

/// The 1-based rank of the ⌈pM⌉-th smallest of M samples (the first for
/// p = 0); 0 when there are none.
fn order_rank(m: usize, p: f64) -> usize {
    if m == 0 {
        return 0;
    }
    ((p * m as f64).ceil() as usize).clamp(1, m)
}

/// The 1-based ranks of the ends of the probabilistically symmetric
/// 100p % coverage interval of M samples (JCGM 101:2008 §7.7, see
/// [`coverage_interval`]); (0, 0) when there are none.
fn coverage_ranks(m: usize, p: f64) -> (usize, usize) {
    if m == 0 {
        return (0, 0);
    }
    let pm = p * m as f64;
    let q = if pm.fract() == 0.0 {
        pm as usize
    } else {
        (pm + 0.5) as usize
    };
    let q = q.min(m);
    // (M − q)/2 when even, (M − q + 1)/2 when odd.
    let r = (m - q).div_ceil(2).max(1);
    (r, (r + q).min(m))
}

/// The ⌈pM⌉-th smallest of the sorted samples (the first for p = 0).
pub fn order_statistic(sorted: &[f64], p: f64) -> f64 {
    match order_rank(sorted.len(), p) {
        0 => f64::NAN,
        r => sorted[r - 1],
    }
}

/// The probabilistically symmetric 100p % coverage interval from sorted
/// samples, JCGM 101:2008 §7.7: q = pM if that is a whole number, else the
/// integer part of pM + 1/2; r = (M − q)/2 if M − q is even, else
/// (M − q + 1)/2; the interval is [y(r), y(r+q)] (1-based).
pub fn coverage_interval(sorted: &[f64], p: f64) -> (f64, f64) {
    match coverage_ranks(sorted.len(), p) {
        (0, _) => (f64::NAN, f64::NAN),
        (lo, hi) => (sorted[lo - 1], sorted[hi - 1]),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splitmix_reference_values() {
        // SplitMix64 seeded 0 (the reference implementation by S. Vigna,
        // prng.di.unimi.it/splitmix64.c — from memory): first output.
        let mut r = Rng::new(0);
        assert_eq!(r.next_u64(), 0xE220_A839_7B1D_CDAF);
    }

    // The order statistics found by selection are those of the sorted
    // samples (a plain sort, the definition), whatever the sample count.
    #[test]
    fn selection_gives_the_sorted_order_statistics() {
        let mut rng = Rng::new(3);
        for m in [1usize, 2, 3, 19, 20, 40, 101, 1000, 4097] {
            let x: Vec<f64> = (0..m).map(|_| (rng.uniform() * 7.0).floor() + rng.uniform()).collect();
            let mut sorted = x.clone();
            sorted.sort_by(f64::total_cmp);
            let mut col = x.clone();
            let opt = McOptions::default();
            let c = summarise("x".into(), Measure::Value, 0.0, &mut col, &opt, 0, None);
            for &(p, v) in &c.percentiles {
                assert_eq!(v, order_statistic(&sorted, p), "m = {m}, p = {p}");
            }
            assert_eq!(c.coverage, coverage_interval(&sorted, 0.95), "m = {m}");
            assert_eq!((c.min, c.max), (sorted[0], sorted[m - 1]));
            assert_eq!(c.histogram.counts.iter().sum::<u64>(), m as u64);
        }
    }

    #[test]
    fn coverage_interval_follows_jcgm_101() {
        // M = 10, p = 0.9: pM = 9 whole, q = 9, M − q = 1 odd, r = 1:
        // [y(1), y(10)].
        let y: Vec<f64> = (1..=10).map(f64::from).collect();
        assert_eq!(coverage_interval(&y, 0.9), (1.0, 10.0));
        // M = 10, p = 0.8: q = 8, M − q = 2 even, r = 1: [y(1), y(9)].
        assert_eq!(coverage_interval(&y, 0.8), (1.0, 9.0));
        // M = 100, p = 0.95: q = 95, M − q = 5 odd, r = 3: [y(3), y(98)].
        let y: Vec<f64> = (1..=100).map(f64::from).collect();
        assert_eq!(coverage_interval(&y, 0.95), (3.0, 98.0));
        assert_eq!(order_statistic(&y, 0.5), 50.0);
        assert_eq!(order_statistic(&y, 0.0), 1.0);
    }
}
