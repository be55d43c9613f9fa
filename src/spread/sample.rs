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
    let (meas, stats) = sample_all(plan, opt);
    let cells = plan
        .shown
        .par_iter()
        .zip(meas.into_par_iter().zip(stats.into_par_iter()))
        .map(|(s, (col, (mag, ang)))| {
            let base = if s.nominal.norm() > 0.0 { s.nominal.arg() } else { 0.0 };
            let angle = (s.measure == Measure::Magnitude).then(|| {
                let (m, sd) = ang.mean_std();
                (base + m, sd)
            });
            summarise(
                s.series.name.clone(),
                s.measure,
                s.measure.of(s.nominal),
                &col,
                &mag,
                opt,
                n - mag.n as usize,
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

/// Count, mean, sum of squared deviations (M2), smallest and largest of
/// the finite values seen. Filled 64 samples at a time: each block's mean
/// and M2 by two passes over its values, then merged by the pairwise
/// update of Chan, Golub & LeVeque ("Algorithms for computing the sample
/// variance", The American Statistician 37, 1983), so no sum of squares
/// about zero ever cancels. Blocks and tasks merge in sample order, so
/// the result does not depend on the number of cores.
#[derive(Clone, Copy, Debug)]
struct Moments {
    n: u64,
    mean: f64,
    m2: f64,
    min: f64,
    max: f64,
}

impl Moments {
    fn new() -> Moments {
        Moments {
            n: 0,
            mean: 0.0,
            m2: 0.0,
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
        }
    }

    /// Take in the finite ones of `xs` (a block).
    fn add_block(&mut self, xs: &[f64]) {
        let (mut n, mut sum) = (0u64, 0.0);
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for &x in xs {
            if x.is_finite() {
                n += 1;
                sum += x;
                lo = lo.min(x);
                hi = hi.max(x);
            }
        }
        if n == 0 {
            return;
        }
        let mean = if lo == hi { lo } else { sum / n as f64 };
        let m2 = if lo == hi {
            0.0
        } else {
            xs.iter()
                .filter(|x| x.is_finite())
                .map(|x| (x - mean) * (x - mean))
                .sum()
        };
        self.merge(&Moments {
            n,
            mean,
            m2,
            min: lo,
            max: hi,
        });
    }

    fn merge(&mut self, o: &Moments) {
        if o.n == 0 {
            return;
        }
        if self.n == 0 {
            *self = *o;
            return;
        }
        let n = self.n + o.n;
        let (na, nb, nt) = (self.n as f64, o.n as f64, n as f64);
        let d = o.mean - self.mean;
        // Equal means (as when every sample is the stated value) stay
        // exactly as they are.
        if d != 0.0 {
            self.mean += d * (nb / nt);
        }
        self.m2 += o.m2 + d * d * (na * nb / nt);
        self.n = n;
        self.min = self.min.min(o.min);
        self.max = self.max.max(o.max);
    }

    /// Mean and standard deviation (divisor n − 1); equal values give
    /// their value and 0 exactly.
    fn mean_std(&self) -> (f64, f64) {
        match self.n {
            0 => (f64::NAN, f64::NAN),
            _ if self.min == self.max => (self.min, 0.0),
            1 => (self.mean, 0.0),
            n => (self.mean, (self.m2.max(0.0) / (n - 1) as f64).sqrt()),
        }
    }
}

/// Each shown value's measures, a column per value, with the moments of
/// its finite ones and, for a value judged by its magnitude, of its angle
/// about its stated one (over the samples whose magnitude is finite).
fn sample_all(plan: &Plan, opt: &McOptions) -> (Vec<Vec<f64>>, Vec<(Moments, Moments)>) {
    let n = opt.samples.max(1);
    let k = plan.shown.len();
    let mut meas: Vec<Vec<f64>> = (0..k).map(|_| vec![0.0; n]).collect();
    let n_tasks = n.div_ceil(TASK);
    // Each task gets its stretch of every column, and its own moments.
    let mut tasks: Vec<Vec<&mut [f64]>> = (0..n_tasks).map(|_| Vec::with_capacity(k)).collect();
    for col in meas.iter_mut() {
        for (t, ch) in col.chunks_mut(TASK).enumerate() {
            tasks[t].push(ch);
        }
    }
    let mut moments = vec![(Moments::new(), Moments::new()); n_tasks * k];
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
    tasks
        .into_par_iter()
        .zip(moments.par_chunks_mut(k.max(1)))
        .enumerate()
        .for_each_init(
            || {
                (
                    plan.block(),
                    vec![vec![C64::new(0.0, 0.0); plan.inputs.len()]; LANES],
                    vec![0.0; plan.dims.len()],
                )
            },
            |(block, ins, p), (t, (mut m, mom))| {
                let len = (n - t * TASK).min(TASK);
                let mut ang = [0.0f64; LANES];
                let (mut xs, mut ys) = ([0.0f64; LANES], [0.0f64; LANES]);
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
                        } else {
                            let (re, im) = block.lanes(s.series.slot);
                            match s.measure {
                                Measure::Value => out.copy_from_slice(&re[..lanes]),
                                Measure::Magnitude => {
                                    // The magnitudes, and the values turned
                                    // by the stated angle back.
                                    let uc = unturn[c];
                                    for l in 0..lanes {
                                        let z = C64::new(re[l], im[l]);
                                        out[l] = crate::engine::ops::abs(z);
                                        let u = z * uc;
                                        (xs[l], ys[l]) = (u.re, u.im);
                                    }
                                    // Their angles: in one straight loop
                                    // when every point is plain, else
                                    // those with a finite magnitude.
                                    if (0..lanes).all(|l| plain_point(ys[l], xs[l])) {
                                        for l in 0..lanes {
                                            ang[l] = atan2_plain(ys[l], xs[l]);
                                        }
                                        mom[c].1.add_block(&ang[..lanes]);
                                    } else {
                                        let mut na = 0;
                                        for l in 0..lanes {
                                            if out[l].is_finite() {
                                                ang[na] = atan2(ys[l], xs[l]);
                                                na += 1;
                                            }
                                        }
                                        mom[c].1.add_block(&ang[..na]);
                                    }
                                }
                            }
                        }
                        mom[c].0.add_block(out);
                    }
                }
            },
        );
    // Merge the tasks' moments in sample order.
    let mut total = vec![(Moments::new(), Moments::new()); k];
    for chunk in moments.chunks(k.max(1)) {
        for (tot, m) in total.iter_mut().zip(chunk) {
            tot.0.merge(&m.0);
            tot.1.merge(&m.1);
        }
    }
    (meas, total)
}

/// atan(k/16) for k = 0 … 16, rounded to the nearest double (mpmath at 40
/// digits; the test checks them against the C library's atan).
const ATAN_SIXTEENTHS: [f64; 17] = [
    0.0,
    0.06241880999595735,
    0.12435499454676144,
    0.18534794999569476,
    0.24497866312686414,
    0.3028848683749714,
    0.35877067027057225,
    0.4124104415973873,
    0.4636476090008061,
    0.5123894603107377,
    0.5585993153435624,
    0.6022873461349642,
    0.6435011087932844,
    0.6823165548747481,
    0.7188299996216245,
    0.7531512809621944,
    std::f64::consts::FRAC_PI_4,
];

/// The angle of (x, y), as `y.atan2(x)` gives it, in a few multiplies and
/// no branch: the ratio t = min/max of |x| and |y| is taken to the nearest
/// sixteenth c, and atan t = atan c + atan u with u = (t − c)/(1 + t·c),
/// |u| ≤ 1/32, whose series u − u³/3 + … to u¹¹ leaves out less than
/// 10⁻¹⁹ of it; then the octant. Agrees with the C library's atan2 within
/// 3 units in the last place (tested); infinities, NaN and (0, 0) go to
/// the library.
#[inline]
pub fn atan2(y: f64, x: f64) -> f64 {
    if !plain_point(y, x) {
        return y.atan2(x);
    }
    atan2_plain(y, x)
}

/// Both parts finite and not both zero: what [`atan2_plain`] takes.
#[inline]
fn plain_point(y: f64, x: f64) -> bool {
    x.is_finite() && y.is_finite() && (x != 0.0 || y != 0.0)
}

/// [`atan2`] for a [`plain_point`], with no branch (so a loop of them
/// runs in vector registers).
#[inline]
fn atan2_plain(y: f64, x: f64) -> f64 {
    use std::f64::consts::{FRAC_PI_2, PI};
    let (ax, ay) = (x.abs(), y.abs());
    let (mn, mx) = (ax.min(ay), ax.max(ay));
    let t = mn / mx;
    let k = ((t * 16.0 + 0.5) as usize).min(16);
    let c = k as f64 * 0.0625;
    let u = (t - c) / (1.0 + t * c);
    let (u2, u4) = (u * u, u * u * u * u);
    // −1/3 + u²/5 − u⁴/7 + u⁶/9 − u⁸/11, in pairs (Estrin).
    let p = (-1.0 / 3.0 + u2 * (1.0 / 5.0)) + u4 * ((-1.0 / 7.0 + u2 * (1.0 / 9.0)) + u4 * (-1.0 / 11.0));
    let mut r = ATAN_SIXTEENTHS[k] + (u + u * u2 * p);
    r = if ay > ax { FRAC_PI_2 - r } else { r };
    r = if x < 0.0 { PI - r } else { r };
    r.copysign(y)
}

/// Bins of the fine histogram the order statistics are found through.
const FINE: usize = 4096;

#[allow(clippy::too_many_arguments)]
fn summarise(
    name: String,
    measure: Measure,
    nominal: f64,
    col: &[f64],
    mom: &Moments,
    opt: &McOptions,
    undefined: usize,
    angle: Option<(f64, f64)>,
) -> McCell {
    let (mean, std_dev) = mom.mean_std();
    let m = mom.n as usize;
    let (min, max) = if m == 0 {
        (f64::NAN, f64::NAN)
    } else {
        (mom.min, mom.max)
    };
    let bins = opt.bins.max(1);
    let mut counts = vec![0u64; bins];
    // The order statistics wanted (1-based ranks among the finite samples).
    let (c_lo, c_hi) = coverage_ranks(m, opt.coverage);
    let mut ranks: Vec<usize> = PERCENTILES
        .iter()
        .map(|&p| order_rank(m, p))
        .chain([c_lo, c_hi])
        .filter(|&r| r >= 1 && r <= m)
        .collect();
    ranks.sort_unstable();
    ranks.dedup();
    let mut at = vec![f64::NAN; ranks.len()];
    if max > min {
        // One pass counts a fine histogram of `per` equal bins to each bin
        // shown (the bin of x never decreases as x grows, so the r-th
        // smallest sample lies in the fine bin where the counts pass r);
        // the bins shown are sums of theirs.
        let per = FINE.div_ceil(bins);
        let n_fine = per * bins;
        let fine_scale = n_fine as f64 / (max - min);
        let fine_bin = |x: f64| (((x - min) * fine_scale) as usize).min(n_fine - 1);
        // Four interleaved counts, so that neighbouring samples falling in
        // one bin do not wait on each other's increments; every sample is
        // finite in the usual column, and the test is left out.
        let mut fine4 = vec![[0u64; 4]; n_fine];
        let all_finite = m == col.len();
        let mut quads = col.chunks_exact(4);
        for q in quads.by_ref() {
            if all_finite {
                for (j, &x) in q.iter().enumerate() {
                    fine4[fine_bin(x)][j] += 1;
                }
            } else {
                for (j, &x) in q.iter().enumerate() {
                    if x.is_finite() {
                        fine4[fine_bin(x)][j] += 1;
                    }
                }
            }
        }
        for &x in quads.remainder().iter().filter(|x| x.is_finite()) {
            fine4[fine_bin(x)][0] += 1;
        }
        let fine: Vec<u64> = fine4.iter().map(|f| f.iter().sum()).collect();
        for (c, f) in counts.iter_mut().zip(fine.chunks(per)) {
            *c = f.iter().sum();
        }
        // Each wanted rank's bin, and its rank inside the bin.
        let mut want: Vec<(usize, usize)> = Vec::with_capacity(ranks.len());
        let (mut b, mut below) = (0usize, 0u64);
        for &r in &ranks {
            while below + fine[b] < r as u64 {
                below += fine[b];
                b += 1;
            }
            want.push((b, r - 1 - below as usize));
        }
        // A second pass gathers the samples of those bins alone, and a
        // selection inside each finds the order statistic.
        let mut slot = vec![usize::MAX; n_fine];
        let mut buckets: Vec<Vec<f64>> = Vec::new();
        for &(b, _) in &want {
            if slot[b] == usize::MAX {
                slot[b] = buckets.len();
                buckets.push(Vec::with_capacity(fine[b] as usize));
            }
        }
        for &x in col.iter().filter(|x| x.is_finite()) {
            let s = slot[fine_bin(x)];
            if s != usize::MAX {
                buckets[s].push(x);
            }
        }
        for (k, &(b, i)) in want.iter().enumerate() {
            let bucket = &mut buckets[slot[b]];
            bucket.select_nth_unstable_by(i, f64::total_cmp);
            at[k] = bucket[i];
        }
    } else if m > 0 {
        counts[0] = m as u64;
        at.iter_mut().for_each(|a| *a = min);
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
            let mut mom = Moments::new();
            for b in x.chunks(LANES) {
                mom.add_block(b);
            }
            let opt = McOptions::default();
            let c = summarise("x".into(), Measure::Value, 0.0, &x, &mom, &opt, 0, None);
            for &(p, v) in &c.percentiles {
                assert_eq!(v, order_statistic(&sorted, p), "m = {m}, p = {p}");
            }
            assert_eq!(c.coverage, coverage_interval(&sorted, 0.95), "m = {m}");
            assert_eq!((c.min, c.max), (sorted[0], sorted[m - 1]));
            assert_eq!(c.histogram.counts.iter().sum::<u64>(), m as u64);
            // Mean and standard deviation by the textbook two passes.
            let mean = x.iter().sum::<f64>() / m as f64;
            assert!(
                (c.mean - mean).abs() <= 1e-14 * 7.0,
                "m = {m}: {} against {mean}",
                c.mean
            );
            if m > 1 {
                let sd = (x.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (m - 1) as f64).sqrt();
                assert!(
                    (c.std_dev - sd).abs() <= 1e-13 * sd,
                    "m = {m}: {} against {sd}",
                    c.std_dev
                );
            }
        }
    }

    // Many equal values at one point, a few far out: the order statistics
    // all fall in one fine bin, and are still those of the sorted samples;
    // equal samples give their value and a zero deviation exactly; values
    // that are not numbers are left out.
    #[test]
    fn crowded_bins_ties_and_non_numbers() {
        let mut x = vec![2.5f64; 5000];
        x.extend([1e9, -3.0, f64::NAN, f64::INFINITY, 2.5 + 1e-12]);
        let finite: Vec<f64> = x.iter().copied().filter(|v| v.is_finite()).collect();
        let mut sorted = finite.clone();
        sorted.sort_by(f64::total_cmp);
        let mut mom = Moments::new();
        for b in x.chunks(LANES) {
            mom.add_block(b);
        }
        let c = summarise(
            "x".into(),
            Measure::Value,
            2.5,
            &x,
            &mom,
            &McOptions::default(),
            2,
            None,
        );
        for &(p, v) in &c.percentiles {
            assert_eq!(v, order_statistic(&sorted, p), "p = {p}");
        }
        assert_eq!((c.min, c.max), (-3.0, 1e9));
        assert_eq!(c.histogram.counts.iter().sum::<u64>(), finite.len() as u64);
        let mut eq = Moments::new();
        for b in [0.1f64; 1000].chunks(LANES) {
            eq.add_block(b);
        }
        assert_eq!(eq.mean_std(), (0.1, 0.0));
    }

    // The angle in a few multiplies against the C library's atan2, over
    // every octant, ratios near each table point, tiny and huge parts, and
    // the signed zeros and infinities the library handles itself.
    #[test]
    fn atan2_agrees_with_the_library() {
        for (k, a) in ATAN_SIXTEENTHS.iter().enumerate() {
            assert!((a - (k as f64 / 16.0).atan()).abs() <= f64::EPSILON * a, "atan({k}/16)");
        }
        let mut rng = Rng::new(11);
        let mut worst = 0.0f64;
        let mut check = |y: f64, x: f64| {
            let (a, b) = (atan2(y, x), y.atan2(x));
            if b.is_nan() {
                assert!(a.is_nan());
                return;
            }
            let ulp = f64::EPSILON * b.abs().max(f64::MIN_POSITIVE);
            worst = worst.max((a - b).abs() / ulp);
            assert!((a - b).abs() <= 4.0 * ulp, "atan2({y}, {x}): {a} against {b}");
        };
        for _ in 0..200_000 {
            let r = (rng.uniform() * 2.0 - 1.0) * 10f64.powf(rng.uniform() * 40.0 - 20.0);
            let s = (rng.uniform() * 2.0 - 1.0) * 10f64.powf(rng.uniform() * 40.0 - 20.0);
            check(r, s);
        }
        for k in 0..=16 {
            for e in [-1.0 / 32.0, -1e-9, -1e-15, 0.0, 1e-15, 1e-9, 1.0 / 33.0] {
                let t = k as f64 / 16.0 + e;
                for (sy, sx) in [(1.0, 1.0), (-1.0, 1.0), (1.0, -1.0), (-1.0, -1.0)] {
                    check(sy * t, sx * 1.0);
                    check(sy * 1.0, sx * t);
                }
            }
        }
        for (y, x) in [
            (0.0, 1.0),
            (-0.0, 1.0),
            (0.0, -1.0),
            (-0.0, -1.0),
            (0.0, 0.0),
            (-0.0, -0.0),
            (1.0, 0.0),
            (f64::INFINITY, 1.0),
            (1.0, f64::NEG_INFINITY),
            (f64::INFINITY, f64::INFINITY),
            (f64::NAN, 1.0),
            (1e-310, 1e-310),
            (1e300, 1e-300),
        ] {
            check(y, x);
            assert_eq!(
                atan2(y, x).is_sign_negative(),
                y.atan2(x).is_sign_negative(),
                "{y}, {x}"
            );
        }
        assert!(worst <= 3.0, "{worst} ulp");
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
