//! A compiled sheet's straight-line program and the emitter that builds it.
//!
//! Every value lives in a numbered slot of complex numbers: cell values
//! (a record cell takes several consecutive slots), constants, and
//! temporaries shared by all cells. The program is the concatenation of
//! every cell's code in topological order, so running it from start to
//! end evaluates the whole sheet, and running one cell's range re-evaluates
//! that cell alone.

use std::collections::HashMap;

use num_complex::Complex64 as C64;

use super::ops::{apply1, apply2, Instr, Op};

/// Temporaries are numbered per cell while compiling and moved to a shared
/// region at the end; this bit marks a not-yet-placed temporary.
pub const TEMP_FLAG: u32 = 1 << 31;

#[derive(Clone, Debug, Default)]
pub struct Program {
    pub code: Vec<Instr>,
    /// For each `Call`: the number of results, then the argument slots.
    pub call_args: Vec<u32>,
    /// Starting value of every slot: inputs and constants hold their value,
    /// everything else zero.
    pub init: Vec<C64>,
    /// Slots from `temp_base` on are scratch space.
    pub temp_base: u32,
    /// Power functions halve their result when phasors are peak values.
    pub peak: bool,
    /// In-sheet searches, run by `Op::Search` (see `engine::search`).
    pub searches: Vec<super::search::Search>,
    /// Networks, solved by `Op::Network` (see `crate::network`).
    pub networks: Vec<crate::network::NetProgram>,
}

impl Program {
    pub fn n_slots(&self) -> usize {
        self.init.len()
    }
}

/// A value while compiling: known now, or in a slot at run time.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Operand {
    Const(C64),
    Slot(u32),
}

impl Operand {
    pub fn konst(self) -> Option<C64> {
        match self {
            Operand::Const(c) => Some(c),
            Operand::Slot(_) => None,
        }
    }
    /// The value if it is a known real number.
    pub fn real_const(self) -> Option<f64> {
        match self {
            Operand::Const(c) if c.im == 0.0 => Some(c.re),
            _ => None,
        }
    }
}

/// Slots allocated so far and the constant pool.
#[derive(Debug, Default)]
pub struct SlotSpace {
    pub init: Vec<C64>,
    consts: HashMap<(u64, u64), u32>,
}

impl SlotSpace {
    /// A space whose first `n` slots are already taken: new slots and
    /// constants are numbered from `n` on (for lowering one more cell
    /// into a finished program).
    pub fn with_base(n: usize) -> SlotSpace {
        SlotSpace {
            init: vec![C64::new(0.0, 0.0); n],
            consts: HashMap::new(),
        }
    }
    pub fn alloc(&mut self, n: u32) -> u32 {
        let s = self.init.len() as u32;
        self.init.extend(std::iter::repeat_n(C64::new(0.0, 0.0), n as usize));
        s
    }
    pub fn constant(&mut self, c: C64) -> u32 {
        let key = (c.re.to_bits(), c.im.to_bits());
        if let Some(&s) = self.consts.get(&key) {
            return s;
        }
        let s = self.alloc(1);
        self.init[s as usize] = c;
        self.consts.insert(key, s);
        s
    }
}

/// Builds one cell's code. Folds operations on constants as it goes, so a
/// formula like `2*pi*60 Hz` costs nothing at run time.
pub struct Emitter<'a> {
    pub code: &'a mut Vec<Instr>,
    pub call_args: &'a mut Vec<u32>,
    pub slots: &'a mut SlotSpace,
    pub next_temp: u32,
    pub peak: bool,
}

impl Emitter<'_> {
    pub fn temp(&mut self, n: u32) -> u32 {
        let t = TEMP_FLAG | self.next_temp;
        self.next_temp += n;
        t
    }

    pub fn slot_of(&mut self, o: Operand) -> u32 {
        match o {
            Operand::Const(c) => self.slots.constant(c),
            Operand::Slot(s) => s,
        }
    }

    pub fn konst(&self, re: f64, im: f64) -> Operand {
        Operand::Const(C64::new(re, im))
    }

    /// `op(a)`.
    pub fn un(&mut self, op: Op, a: Operand) -> Operand {
        self.un_bits(op, a, 0)
    }

    /// `a ^ n` for a whole `n`.
    pub fn powi(&mut self, a: Operand, n: i32) -> Operand {
        match n {
            1 => a,
            2 => self.bin(Op::Mul, a, a),
            -1 => self.un(Op::Recip, a),
            _ => self.un_bits(Op::PowI, a, n as u32),
        }
    }

    fn un_bits(&mut self, op: Op, a: Operand, bits: u32) -> Operand {
        if let Operand::Const(c) = a {
            return Operand::Const(apply1(op, c, bits));
        }
        let a = self.slot_of(a);
        let dst = self.temp(1);
        self.code.push(Instr { op, dst, a, b: bits });
        Operand::Slot(dst)
    }

    /// `op(a, b)`.
    pub fn bin(&mut self, op: Op, a: Operand, b: Operand) -> Operand {
        if let (Operand::Const(x), Operand::Const(y)) = (a, b) {
            return Operand::Const(apply2(op, x, y));
        }
        // x*1, 1*x, x+0, 0+x, x-0, x/1: exact identities, skip them.
        let one = C64::new(1.0, 0.0);
        let zero = C64::new(0.0, 0.0);
        match (op, a.konst(), b.konst()) {
            (Op::Mul, Some(c), _) if c == one => return b,
            (Op::Mul | Op::Div, _, Some(c)) if c == one => return a,
            (Op::Add, Some(c), _) if c == zero && !c.re.is_sign_negative() => return b,
            (Op::Add | Op::Sub, _, Some(c)) if c == zero && !c.re.is_sign_negative() => return a,
            _ => {}
        }
        let a = self.slot_of(a);
        let b = self.slot_of(b);
        let dst = self.temp(1);
        self.code.push(Instr { op, dst, a, b });
        Operand::Slot(dst)
    }

    /// `yes` where `cond` is exactly 1, `no` where it is exactly 0, NaN
    /// otherwise (`Op::Select`). A known condition picks the branch now.
    pub fn select(&mut self, cond: Operand, yes: Operand, no: Operand) -> Operand {
        if let Operand::Const(c) = cond {
            return match super::ops::select(c, C64::new(1.0, 0.0), C64::new(0.0, 0.0)) {
                v if v.re == 1.0 => yes,
                v if v.re == 0.0 => no,
                _ => Operand::Const(C64::new(f64::NAN, f64::NAN)),
            };
        }
        // the branches go to two consecutive slots
        let pair = self.temp(2);
        for (k, v) in [yes, no].into_iter().enumerate() {
            let a = self.slot_of(v);
            self.code.push(Instr {
                op: Op::Copy,
                dst: pair + k as u32,
                a,
                b: 0,
            });
        }
        let c = self.slot_of(cond);
        let dst = self.temp(1);
        self.code.push(Instr {
            op: Op::Select,
            dst,
            a: c,
            b: pair,
        });
        Operand::Slot(dst)
    }

    /// Solve network `k` (its results are `width` consecutive slots).
    pub fn network(&mut self, k: u16, args: &[Operand], width: u32) -> Vec<Operand> {
        let start = self.call_args.len() as u32;
        self.call_args.push(width);
        for &a in args {
            let s = self.slot_of(a);
            self.call_args.push(s);
        }
        let dst = self.temp(width);
        self.code.push(Instr {
            op: Op::Network(k),
            dst,
            a: start,
            b: args.len() as u32,
        });
        (0..width).map(|i| Operand::Slot(dst + i)).collect()
    }

    /// Call library function `fid` with `width` results.
    pub fn call(&mut self, fid: u16, args: &[Operand], width: u32) -> Vec<Operand> {
        let f = &crate::funcs::library()[fid as usize];
        if let (crate::funcs::Impl::Scalar(eval), true) = (&f.imp, args.iter().all(|a| a.konst().is_some())) {
            let vals: Vec<C64> = args.iter().map(|a| a.konst().unwrap_or_default()).collect();
            let mut out = vec![C64::new(0.0, 0.0); width as usize];
            eval(&vals, &mut out, &crate::funcs::Ctx { peak: self.peak });
            return out.into_iter().map(Operand::Const).collect();
        }
        let start = self.call_args.len() as u32;
        self.call_args.push(width);
        for &a in args {
            let s = self.slot_of(a);
            self.call_args.push(s);
        }
        let dst = self.temp(width);
        self.code.push(Instr {
            op: Op::Call(fid),
            dst,
            a: start,
            b: args.len() as u32,
        });
        (0..width).map(|i| Operand::Slot(dst + i)).collect()
    }
}
