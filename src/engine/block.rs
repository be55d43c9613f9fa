//! Running a compiled program over a block of cases at once.
//!
//! Each slot holds `LANES` cases as separate arrays of real and imaginary
//! parts, so the common instructions (+, -, ×, ÷, ||, |z|) are simple loops
//! over lanes that the compiler vectorises. Lanes that need the careful
//! path (division by a tiny or zero divisor, a short or open in `||`) are
//! redone one by one with the same scalar functions `eval.rs` uses, so the
//! two evaluators agree bit for bit.

use num_complex::Complex64 as C64;

use super::ops::{self, apply1, apply2, Instr, Op};
use super::program::Program;
use crate::funcs::{self, Ctx, Impl};

/// Cases per block.
pub const LANES: usize = 64;

/// Slot values for one block of cases.
#[derive(Clone)]
pub struct Block {
    re: Vec<f64>,
    im: Vec<f64>,
    n_slots: usize,
}

impl Block {
    /// A block with every lane at the program's initial values.
    pub fn new(prog: &Program) -> Block {
        validate(prog);
        let n = prog.n_slots();
        let mut re = vec![0.0; n * LANES];
        let mut im = vec![0.0; n * LANES];
        for (s, v) in prog.init.iter().enumerate() {
            re[s * LANES..(s + 1) * LANES].fill(v.re);
            im[s * LANES..(s + 1) * LANES].fill(v.im);
        }
        Block { re, im, n_slots: n }
    }

    pub fn set(&mut self, slot: u32, lane: usize, v: C64) {
        let i = slot as usize * LANES + lane;
        self.re[i] = v.re;
        self.im[i] = v.im;
    }

    /// Set one slot for every lane to the same value.
    pub fn fill(&mut self, slot: u32, v: C64) {
        let s = slot as usize * LANES;
        self.re[s..s + LANES].fill(v.re);
        self.im[s..s + LANES].fill(v.im);
    }

    pub fn get(&self, slot: u32, lane: usize) -> C64 {
        let i = slot as usize * LANES + lane;
        C64::new(self.re[i], self.im[i])
    }

    /// One slot's real and imaginary parts, one entry per lane.
    pub fn lanes(&self, slot: u32) -> (&[f64], &[f64]) {
        let s = slot as usize * LANES;
        (&self.re[s..s + LANES], &self.im[s..s + LANES])
    }

    /// One slot's parts, to fill many lanes at once.
    pub fn lanes_mut(&mut self, slot: u32) -> (&mut [f64], &mut [f64]) {
        let s = slot as usize * LANES;
        (&mut self.re[s..s + LANES], &mut self.im[s..s + LANES])
    }

    pub fn n_slots(&self) -> usize {
        self.n_slots
    }

    /// Run `code` over all lanes.
    pub fn run(&mut self, code: &[Instr], prog: &Program) {
        for ins in code {
            self.exec(ins, prog);
        }
    }

    #[inline]
    fn exec(&mut self, ins: &Instr, prog: &Program) {
        let d = ins.dst as usize * LANES;
        let a = ins.a as usize * LANES;
        let b = ins.b as usize * LANES;
        let re = self.re.as_mut_ptr();
        let im = self.im.as_mut_ptr();
        // SAFETY: `validate` checked at construction that every slot index
        // of the program is below `n_slots`, so every `x + l` with
        // l < LANES is in bounds of both arrays. Destination and source
        // slots may coincide only lane-for-lane, and each lane reads its
        // sources before writing.
        unsafe {
            match ins.op {
                Op::Add => {
                    for l in 0..LANES {
                        *re.add(d + l) = *re.add(a + l) + *re.add(b + l);
                        *im.add(d + l) = *im.add(a + l) + *im.add(b + l);
                    }
                }
                Op::Sub => {
                    for l in 0..LANES {
                        *re.add(d + l) = *re.add(a + l) - *re.add(b + l);
                        *im.add(d + l) = *im.add(a + l) - *im.add(b + l);
                    }
                }
                Op::Mul => {
                    let mut careful = false;
                    for l in 0..LANES {
                        let (ar, ai, br, bi) = (*re.add(a + l), *im.add(a + l), *re.add(b + l), *im.add(b + l));
                        let (pr, pi) = (ar * br - ai * bi, ar * bi + ai * br);
                        // a NaN part: redo with `ops::mul` (an infinite operand)
                        careful |= pr.is_nan() | pi.is_nan();
                        *re.add(d + l) = pr;
                        *im.add(d + l) = pi;
                    }
                    if careful {
                        self.fix_lanes(ins, ops::mul);
                    }
                }
                Op::Div => {
                    let mut careful = false;
                    for l in 0..LANES {
                        let (ar, ai, br, bi) = (*re.add(a + l), *im.add(a + l), *re.add(b + l), *im.add(b + l));
                        let den = br * br + bi * bi;
                        // the test `ops::div` makes: |b|² plain and `a` finite
                        careful |= !(plain(den) & finite(ar) & finite(ai));
                        *re.add(d + l) = (ar * br + ai * bi) / den;
                        *im.add(d + l) = (ai * br - ar * bi) / den;
                    }
                    if careful {
                        self.fix_lanes(ins, ops::div);
                    }
                }
                Op::Par => {
                    let mut careful = false;
                    for l in 0..LANES {
                        let (ar, ai, br, bi) = (*re.add(a + l), *im.add(a + l), *re.add(b + l), *im.add(b + l));
                        let nr = ar * br - ai * bi;
                        let ni = ar * bi + ai * br;
                        let sr = ar + br;
                        let si = ai + bi;
                        let den = sr * sr + si * si;
                        // the same test as `ops::par_plain_ok`, with `&` for
                        // `&&` so the loop has no branches and vectorises
                        let ma = ar.abs().max(ai.abs());
                        let mb = br.abs().max(bi.abs());
                        let ok = (1e-75..=1e75).contains(&ma) & (1e-75..=1e75).contains(&mb) & normal(den);
                        careful |= !ok;
                        *re.add(d + l) = (nr * sr + ni * si) / den;
                        *im.add(d + l) = (ni * sr - nr * si) / den;
                    }
                    if careful {
                        self.fix_lanes(ins, ops::par);
                    }
                }
                Op::Neg => {
                    for l in 0..LANES {
                        *re.add(d + l) = -*re.add(a + l);
                        *im.add(d + l) = -*im.add(a + l);
                    }
                }
                Op::Conj => {
                    for l in 0..LANES {
                        *re.add(d + l) = *re.add(a + l);
                        *im.add(d + l) = -*im.add(a + l);
                    }
                }
                Op::Copy => {
                    for l in 0..LANES {
                        *re.add(d + l) = *re.add(a + l);
                        *im.add(d + l) = *im.add(a + l);
                    }
                }
                Op::Re => {
                    for l in 0..LANES {
                        *re.add(d + l) = *re.add(a + l);
                        *im.add(d + l) = 0.0;
                    }
                }
                Op::Im => {
                    for l in 0..LANES {
                        *re.add(d + l) = *im.add(a + l);
                        *im.add(d + l) = 0.0;
                    }
                }
                Op::Abs => {
                    let mut careful = false;
                    for l in 0..LANES {
                        let (ar, ai) = (*re.add(a + l), *im.add(a + l));
                        let s = ar * ar + ai * ai;
                        careful |= !plain(s);
                        *re.add(d + l) = s.sqrt();
                        *im.add(d + l) = 0.0;
                    }
                    if careful {
                        for l in 0..LANES {
                            let z = C64::new(*re.add(a + l), *im.add(a + l));
                            *re.add(d + l) = ops::abs(z);
                        }
                    }
                }
                Op::Select => {
                    // the same choice as `ops::select`, without branches
                    let n = b + LANES;
                    for l in 0..LANES {
                        let (cr, ci) = (*re.add(a + l), *im.add(a + l));
                        let yes = (cr == 1.0) & (ci == 0.0);
                        let no = (cr == 0.0) & (ci == 0.0);
                        let (yr, yi, nr, ni) = (*re.add(b + l), *im.add(b + l), *re.add(n + l), *im.add(n + l));
                        let r = if yes {
                            yr
                        } else if no {
                            nr
                        } else {
                            f64::NAN
                        };
                        let i = if yes {
                            yi
                        } else if no {
                            ni
                        } else {
                            f64::NAN
                        };
                        *re.add(d + l) = r;
                        *im.add(d + l) = i;
                    }
                }
                Op::Call(fid) => self.call(fid, ins, prog),
                Op::Search(k) => super::search::exec_block(k as usize, ins.dst, prog, self),
                Op::Network(k) => self.network(k, ins, prog),
                op if op.is_unary() => {
                    for l in 0..LANES {
                        let z = apply1(op, C64::new(*re.add(a + l), *im.add(a + l)), ins.b);
                        *re.add(d + l) = z.re;
                        *im.add(d + l) = z.im;
                    }
                }
                op => {
                    for l in 0..LANES {
                        let z = apply2(
                            op,
                            C64::new(*re.add(a + l), *im.add(a + l)),
                            C64::new(*re.add(b + l), *im.add(b + l)),
                        );
                        *re.add(d + l) = z.re;
                        *im.add(d + l) = z.im;
                    }
                }
            }
        }
    }

    /// Redo a binary instruction lane by lane with the scalar function.
    #[cold]
    fn fix_lanes(&mut self, ins: &Instr, f: impl Fn(C64, C64) -> C64) {
        for l in 0..LANES {
            let x = self.get(ins.a, l);
            let y = self.get(ins.b, l);
            let z = f(x, y);
            self.set(ins.dst, l, z);
        }
    }

    /// A network, solved lane by lane with the scalar solver (so both
    /// evaluators agree to the bit).
    fn network(&mut self, k: u16, ins: &Instr, prog: &Program) {
        let net = &prog.networks[k as usize];
        let base = ins.a as usize;
        let width = prog.call_args[base] as usize;
        let n = ins.b as usize;
        let arg_slots = &prog.call_args[base + 1..base + 1 + n];
        // One workspace for the whole block: the 64 solves reuse its
        // buffers and allocate nothing.
        crate::network::with_workspace(|ws| {
            let mut args = std::mem::take(&mut ws.args);
            let mut out = std::mem::take(&mut ws.out);
            args.clear();
            args.resize(n, C64::new(0.0, 0.0));
            out.clear();
            out.resize(width, C64::new(0.0, 0.0));
            for l in 0..LANES {
                for (a, &s) in args.iter_mut().zip(arg_slots) {
                    *a = self.get(s, l);
                }
                let _ = net.run_in(ws, &args, &mut out);
                for (i, v) in out.iter().enumerate() {
                    self.set(ins.dst + i as u32, l, *v);
                }
            }
            ws.args = args;
            ws.out = out;
        });
    }

    fn call(&mut self, fid: u16, ins: &Instr, prog: &Program) {
        let f = &funcs::library()[fid as usize];
        let Impl::Scalar(eval) = f.imp else {
            unreachable!("only scalar functions are called")
        };
        let base = ins.a as usize;
        let width = prog.call_args[base] as usize;
        let n = ins.b as usize;
        let ctx = Ctx { peak: prog.peak };
        let mut args = [C64::new(0.0, 0.0); funcs::MAX_CALL_ARGS];
        let mut out = [C64::new(0.0, 0.0); funcs::MAX_CALL_ARGS];
        for l in 0..LANES {
            for (k, a) in args[..n].iter_mut().enumerate() {
                *a = self.get(prog.call_args[base + 1 + k], l);
            }
            eval(&args[..n], &mut out[..width], &ctx);
            for (k, v) in out[..width].iter().enumerate() {
                self.set(ins.dst + k as u32, l, *v);
            }
        }
    }
}

/// `d.is_normal() && d < 1e300` (the test `ops::div` and `ops::abs` make)
/// for a sum of squares, which is never negative: two comparisons, so the
/// loops vectorise. NaN fails both.
#[inline(always)]
fn plain(d: f64) -> bool {
    (f64::MIN_POSITIVE..1e300).contains(&d)
}

/// `x.is_finite()` as one comparison (NaN fails it), so loops vectorise.
#[inline(always)]
fn finite(x: f64) -> bool {
    x.abs() < f64::INFINITY
}

/// `d.is_normal()` for a value that is never negative.
#[inline(always)]
fn normal(d: f64) -> bool {
    (f64::MIN_POSITIVE..f64::INFINITY).contains(&d)
}

/// Every slot a program names must exist; `Block::exec` relies on it.
fn validate(prog: &Program) {
    let n = prog.n_slots() as u32;
    for ins in &prog.code {
        assert!(ins.dst < n, "instruction writes slot {} of {n}", ins.dst);
        match ins.op {
            Op::Call(_) | Op::Network(_) => {
                let base = ins.a as usize;
                let width = prog.call_args[base];
                assert!(ins.dst + width <= n);
                for k in 0..ins.b as usize {
                    assert!(prog.call_args[base + 1 + k] < n);
                }
            }
            op => {
                assert!(ins.a < n, "instruction reads slot {} of {n}", ins.a);
                if !op.is_unary() {
                    assert!(ins.b < n, "instruction reads slot {} of {n}", ins.b);
                }
                if op == Op::Select {
                    assert!(ins.b + 1 < n, "instruction reads slot {} of {n}", ins.b + 1);
                }
            }
        }
    }
}
