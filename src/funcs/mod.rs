//! Built-in functions: the registry the compiler looks names up in, and the
//! listing `ohmsheet functions` prints.
//!
//! A function declares its parameters (with the units it expects, for the
//! listing), a typing rule that checks the arguments' dimensions and gives
//! the result's, and an implementation:
//! - `Impl::Lower` emits primitive instructions (these vectorise in batch
//!   runs and fold when the arguments are constants), or
//! - `Impl::Scalar` computes the results from argument values, one case at
//!   a time (for functions with branches or many results).
//!
//! To add a function: write it in the module that fits (or a new one), add
//! it to that module's `FUNCS`, and add a test against a named outside
//! source. See DEVELOPERS.md.

pub mod conductors;
pub mod domains;
pub mod elements;
pub mod faults;
pub mod hyperbolic;
pub mod lines;
pub mod matching;
pub mod math;
pub mod networks;
pub mod perunit;
pub mod power;
pub mod quality;
pub mod ratios;
pub mod steps;
pub mod threephase;
pub mod twoports;

use std::sync::OnceLock;

use num_complex::Complex64 as C64;

use crate::engine::program::{Emitter, Operand};
use crate::units::{Dim, Kind, Quantity};

/// The most arguments, and the most results, of a function computed by
/// `Impl::Scalar`.
pub const MAX_CALL_ARGS: usize = 16;

/// What a function sees of the sheet's conventions.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Ctx {
    /// Phasors are peak values (`@amplitude peak`), not RMS.
    pub peak: bool,
}

impl Ctx {
    /// S = k·V·I*: 1 for RMS phasors, 1/2 for peak phasors.
    pub fn power_factor_k(&self) -> f64 {
        if self.peak {
            0.5
        } else {
            1.0
        }
    }
}

/// The shape of a function's result.
#[derive(Clone, Debug, PartialEq)]
pub enum Shape {
    Scalar(Quantity),
    /// Named fields, addressed as `cell.field`.
    Record(Vec<(&'static str, Quantity)>),
}

impl Shape {
    pub fn width(&self) -> u32 {
        match self {
            Shape::Scalar(_) => 1,
            Shape::Record(f) => f.len() as u32,
        }
    }
}

/// A problem with the arguments of a call; `arg` says which, if one.
#[derive(Clone, Debug, PartialEq)]
pub struct ArgError {
    pub arg: Option<usize>,
    pub message: String,
}

impl ArgError {
    pub fn at(arg: usize, message: impl Into<String>) -> ArgError {
        ArgError {
            arg: Some(arg),
            message: message.into(),
        }
    }
    /// A place in a message for the value passed as argument `i`: the
    /// explanation puts the value there as values are shown, with its
    /// unit (`750 kVA`, `3 + j4 Ω`), never as raw SI numbers.
    pub fn value(i: usize) -> String {
        format!("{{#{i}}}")
    }
    pub fn whole(message: impl Into<String>) -> ArgError {
        ArgError {
            arg: None,
            message: message.into(),
        }
    }
}

pub type TypeFn = fn(&[Quantity], &Ctx) -> Result<Shape, ArgError>;
pub type ScalarFn = fn(&[C64], &mut [C64], &Ctx);
pub type LowerFn = fn(&mut Emitter, &[Operand], &[Quantity]) -> Vec<Operand>;
/// Says why argument values lie outside a function's domain (a power
/// factor above 1, a negative length, a matching network that cannot
/// exist), or `None` when they are inside it. Called only to explain a
/// result that is not a finite number, never on the hot path.
pub type DomainFn = fn(&[C64], &Ctx) -> Option<ArgError>;

/// The physical range of one argument (`Builtin::ranges`): outside it the
/// function's result is NaN, whatever its formula would give, so the
/// domain check explains it instead of a finite misreading (a negative
/// inductance giving a capacitive impedance).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Range {
    /// Real and ≥ 0 (∞ allowed): an element value, a rating that may be 0.
    NonNeg,
    /// Real and > 0 (∞ allowed): a base, a frequency, a resistance.
    Positive,
    /// Real and < 0: a capacitor's reactance.
    Negative,
    /// Real part > 0 (any imaginary part): a source's impedance.
    RePositive,
    /// Magnitude ≤ 1: a passive load's reflection coefficient.
    UnitDisc,
    /// Neither 0 nor infinite (any phase): a base, a bank's voltage.
    NonZero,
}

pub enum Impl {
    Lower(LowerFn),
    Scalar(ScalarFn),
}

pub struct Param {
    pub name: &'static str,
    /// The unit expected, as shown in the listing: `Ω`, `H`, `any`; or a
    /// record type (`two-port`), see `RecordParam`.
    pub unit: &'static str,
}

/// A record type a parameter can take: the argument is a record cell (or
/// a call returning one) with at least these fields, and the function
/// receives the fields' values in this order, each as an argument of its
/// own (so a typing rule, a lowering and a domain check see `fields.len()`
/// values for it). Other fields of the record are ignored.
pub struct RecordParam {
    /// Written as the parameter's unit in the listing.
    pub unit: &'static str,
    /// What it is, for messages: "a two-port".
    pub what: &'static str,
    pub fields: &'static [&'static str],
    /// How to make one, for messages.
    pub hint: &'static str,
}

/// The unit of a parameter taking a two-port: a record with fields A, B, C, D.
pub const TWO_PORT: &str = "two-port";

const RECORD_PARAMS: &[RecordParam] = &[RecordParam {
    unit: TWO_PORT,
    what: "a two-port",
    fields: &["A", "B", "C", "D"],
    hint: "make one with `abcd_series`, `abcd_shunt`, `abcd_line`, `abcd_xfmr`, `line_pi` or `cascade`",
}];

impl Param {
    /// The record type this parameter takes, if it takes one.
    pub fn record(&self) -> Option<&'static RecordParam> {
        RECORD_PARAMS.iter().find(|r| r.unit == self.unit)
    }
}

pub struct Builtin {
    pub name: &'static str,
    /// One line for the listing.
    pub summary: &'static str,
    pub params: &'static [Param],
    /// The last parameter may repeat.
    pub variadic: bool,
    /// What the result is, for the listing: `Ω`, `record R (Ω), X (Ω)`.
    pub returns: &'static str,
    pub ty: TypeFn,
    pub imp: Impl,
    /// The function's domain, to explain a NaN or infinite result.
    pub domain: Option<DomainFn>,
    /// The published method or reference the function follows and is
    /// tested against (for the listing, docs and hover); empty if none.
    pub source: &'static str,
    /// For `Impl::Scalar`: instructions that turn the arguments into the
    /// values the scalar function receives, one for one — ω in rad/s from
    /// a frequency given in Hz or rad/s (`omega`), which a scalar function
    /// cannot tell apart from the value alone. The domain check still
    /// receives the arguments as written.
    pub prepare: Option<LowerFn>,
    /// Every value the function returns is real whatever its arguments
    /// (it is built from a real part, a magnitude, a signed cos φ): a
    /// power factor, the parts of a power, a kvar rating. Declared once
    /// here (`.with_real_result()`); batch and sweep output give such a
    /// value one column (see `batch::real_slots`). A lowered function needs
    /// no flag: its instructions are read for the same purpose.
    pub real_result: bool,
    /// Arguments with a physical range (`Range`), by the index of the value
    /// (as a domain check sees them); from `domains::RANGES`. The compiler
    /// makes the results NaN outside them (`Lowerer::call`).
    pub ranges: &'static [(usize, Range)],
}

impl Builtin {
    /// The parameter the `k`th written argument fills (the last one
    /// repeats for a variadic function).
    pub fn param_at(&self, k: usize) -> &Param {
        &self.params[k.min(self.params.len().saturating_sub(1))]
    }
    /// How many values the `k`th written argument passes: 1, or the
    /// number of fields of a record parameter.
    pub fn arg_width(&self, k: usize) -> usize {
        self.param_at(k).record().map_or(1, |r| r.fields.len())
    }
    /// The written argument that passed value `i` (of the values a typing
    /// rule or domain check sees), for a call with `n` written arguments.
    pub fn written_arg(&self, n: usize, i: usize) -> usize {
        let mut at = 0;
        for k in 0..n {
            at += self.arg_width(k);
            if i < at {
                return k;
            }
        }
        n.saturating_sub(1)
    }
    /// The same function with a domain check.
    pub fn with_domain(self, domain: DomainFn) -> Builtin {
        Builtin {
            domain: Some(domain),
            ..self
        }
    }
    /// The same function with its source named.
    pub fn with_source(self, source: &'static str) -> Builtin {
        Builtin { source, ..self }
    }
    /// The same function, declared to return only real values (see
    /// `real_result`).
    pub fn with_real_result(self) -> Builtin {
        Builtin {
            real_result: true,
            ..self
        }
    }
    /// The same (scalar) function with its arguments prepared by
    /// instructions first (see `prepare`).
    pub fn with_prepare(self, prepare: LowerFn) -> Builtin {
        Builtin {
            prepare: Some(prepare),
            ..self
        }
    }
}

/// The families of functions, in listing order: a heading and the
/// functions under it, each with its source and domain (`domains::TABLE`).
fn families() -> Vec<(&'static str, Vec<Builtin>)> {
    vec![
        ("Mathematics", domains::annotate(math::funcs())),
        ("Elements at a frequency", domains::annotate(elements::funcs())),
        (
            "Dividers, sources and equivalents",
            domains::annotate(networks::funcs()),
        ),
        (
            "Power, maximum power transfer and power-factor correction",
            domains::annotate(power::funcs()),
        ),
        ("Three phase", domains::annotate(threephase::funcs())),
        ("Per-unit", domains::annotate(perunit::funcs())),
        ("Matching networks", domains::annotate(matching::funcs())),
        ("Lines and RF", domains::annotate(lines::funcs())),
        ("Two-ports (ABCD parameters)", domains::annotate(twoports::funcs())),
        ("Ratios", domains::annotate(ratios::funcs())),
        ("Hyperbolic functions", hyperbolic::funcs()),
        ("Steps, standard sizes and a two-way choice", steps::funcs()),
        ("Fault studies", faults::funcs()),
        ("Power quality", quality::funcs()),
        ("Conductor sizes", conductors::funcs()),
    ]
}

struct Lib {
    funcs: Vec<Builtin>,
    /// (heading, index of its first function)
    sections: Vec<(&'static str, usize)>,
}

fn lib() -> &'static Lib {
    static LIB: OnceLock<Lib> = OnceLock::new();
    LIB.get_or_init(|| {
        let mut funcs = Vec::new();
        let mut sections = Vec::new();
        for (heading, fs) in families() {
            sections.push((heading, funcs.len()));
            funcs.extend(fs.into_iter().map(domains::with_ranges));
        }
        Lib { funcs, sections }
    })
}

/// Every built-in function, in listing order.
pub fn library() -> &'static [Builtin] {
    &lib().funcs
}

/// Headings of the listing, each with the index of its first function.
pub fn sections() -> &'static [(&'static str, usize)] {
    &lib().sections
}

/// Look a function up by name.
pub fn find(name: &str) -> Option<(u16, &'static Builtin)> {
    library()
        .iter()
        .enumerate()
        .find(|(_, f)| f.name == name)
        .map(|(i, f)| (i as u16, f))
}

// ---- helpers for typing rules ----

/// Argument `i` must have dimension `dim`.
pub fn want(q: &[Quantity], i: usize, dim: Dim, param: &str) -> Result<(), ArgError> {
    if q[i].dim == dim {
        Ok(())
    } else {
        Err(ArgError::at(
            i,
            format!(
                "`{param}` must be {}, but this is {}",
                Quantity::of(dim).describe(),
                q[i].describe()
            ),
        ))
    }
}

/// Argument `i` must be dimensionless (a plain number, an angle or per-unit).
pub fn want_dimensionless(q: &[Quantity], i: usize, param: &str) -> Result<(), ArgError> {
    if q[i].dim.is_none() {
        Ok(())
    } else {
        Err(ArgError::at(
            i,
            format!("`{param}` must be a plain number, but this is {}", q[i].describe()),
        ))
    }
}

/// All arguments must share one dimension; returns it.
pub fn want_same(q: &[Quantity]) -> Result<Dim, ArgError> {
    let d = q[0].dim;
    for (i, x) in q.iter().enumerate().skip(1) {
        if x.dim != d {
            return Err(ArgError::at(
                i,
                format!(
                    "all arguments must have one dimension: the first is {}, this is {}",
                    q[0].describe(),
                    x.describe()
                ),
            ));
        }
    }
    Ok(d)
}

pub fn scalar(dim: Dim, kind: Kind) -> Result<Shape, ArgError> {
    Ok(Shape::Scalar(Quantity::new(dim, kind)))
}

// ---- helpers for the engineering families ----

/// An impedance: in Ω, or a per-unit value.
pub fn is_impedance(q: Quantity) -> bool {
    q.dim == Dim::IMPEDANCE || (q.dim.is_none() && q.kind == Kind::PerUnit)
}

/// Argument `i` must be an impedance (Ω or pu).
pub fn want_impedance(q: &[Quantity], i: usize, param: &str) -> Result<(), ArgError> {
    if is_impedance(q[i]) {
        return Ok(());
    }
    let mut m = format!(
        "`{param}` must be an impedance (Ω, or pu), but this is {}",
        q[i].describe()
    );
    if q[i].dim == Dim::ADMITTANCE {
        m.push_str("; for an admittance Y pass 1/Y");
    } else if q[i].is_plain_number() {
        m.push_str("; give it a unit: `(3 + j4) Ω` or `j0.1 pu`");
    }
    Err(ArgError::at(i, m))
}

/// Argument `i` must have dimension `dim`, or be a per-unit value.
pub fn want_or_pu(q: &[Quantity], i: usize, dim: Dim, param: &str) -> Result<(), ArgError> {
    if q[i].dim == dim || (q[i].dim.is_none() && q[i].kind == Kind::PerUnit) {
        Ok(())
    } else {
        Err(ArgError::at(
            i,
            format!(
                "`{param}` must be {} (or pu), but this is {}",
                Quantity::of(dim).describe(),
                q[i].describe()
            ),
        ))
    }
}

/// Argument `i` must be a plain number: not a unit, an angle or per-unit.
pub fn want_plain(q: &[Quantity], i: usize, param: &str, what: &str) -> Result<(), ArgError> {
    // A percentage is a plain fraction: a power factor of 80 % is 0.8.
    if q[i].is_plain_number() || (q[i].dim.is_none() && q[i].kind == Kind::Percent) {
        Ok(())
    } else {
        Err(ArgError::at(
            i,
            format!(
                "`{param}` must be a plain number ({what}), but this is {}",
                q[i].describe()
            ),
        ))
    }
}

/// Argument `i` must be a frequency whose kind says Hz or rad/s.
pub fn want_frequency(q: &[Quantity], i: usize, param: &str) -> Result<(), ArgError> {
    let x = q[i];
    if x.dim != Dim::FREQUENCY {
        return Err(ArgError::at(
            i,
            format!(
                "`{param}` must be a frequency (Hz or rad/s), but this is {}",
                x.describe()
            ),
        ));
    }
    match x.kind {
        Kind::Hertz | Kind::RadPerSec => Ok(()),
        _ => Err(ArgError::at(
            i,
            format!(
                "`{param}` is a frequency, but not marked as Hz or rad/s, so it is unclear whether to multiply by 2π; \
                 show the cell it comes from in one of them (`f0 = … [Hz]`) or write it with a unit (`50 Hz`)"
            ),
        )),
    }
}

/// ω in rad/s from a frequency that passed `want_frequency`.
pub fn omega(e: &mut Emitter, f: Operand, q: Quantity) -> Operand {
    if q.kind == Kind::RadPerSec {
        f
    } else {
        let k = e.konst(std::f64::consts::TAU, 0.0);
        e.bin(crate::engine::ops::Op::Mul, f, k)
    }
}

/// k in S = k·V·I*: 1 for RMS phasors, 1/2 for peak.
pub fn power_k(e: &Emitter) -> f64 {
    if e.peak {
        0.5
    } else {
        1.0
    }
}

/// A quantity for results.
pub fn q(dim: Dim, kind: Kind) -> Quantity {
    Quantity::new(dim, kind)
}

/// Per-unit result quantity.
pub const PU: Quantity = Quantity {
    dim: Dim::NONE,
    kind: Kind::PerUnit,
};

/// A builtin with one fixed parameter list, lowered to instructions.
pub fn lowered(
    name: &'static str,
    summary: &'static str,
    params: &'static [Param],
    returns: &'static str,
    ty: TypeFn,
    lower: LowerFn,
) -> Builtin {
    Builtin {
        name,
        summary,
        params,
        variadic: false,
        returns,
        ty,
        imp: Impl::Lower(lower),
        domain: None,
        source: "",
        prepare: None,
        real_result: false,
        ranges: &[],
    }
}

/// A builtin computed case by case.
pub fn scalar_fn(
    name: &'static str,
    summary: &'static str,
    params: &'static [Param],
    returns: &'static str,
    ty: TypeFn,
    eval: ScalarFn,
) -> Builtin {
    Builtin {
        name,
        summary,
        params,
        variadic: false,
        returns,
        ty,
        imp: Impl::Scalar(eval),
        domain: None,
        source: "",
        prepare: None,
        real_result: false,
        ranges: &[],
    }
}

/// `p!("L", "H")`: a parameter, usable in a promoted `&[...]` list.
#[macro_export]
macro_rules! param {
    ($name:expr, $unit:expr) => {
        $crate::funcs::Param {
            name: $name,
            unit: $unit,
        }
    };
}
pub use param as p;

/// 1 where `x` lies in range `r`, 0 where it does not, NaN where `x` is
/// NaN (comparisons read real parts; see `Op::Lt`).
fn in_range(e: &mut Emitter, x: Operand, r: Range) -> Operand {
    use crate::engine::ops::Op;
    let zero = e.konst(0.0, 0.0);
    let real = |e: &mut Emitter| {
        let im = e.un(Op::Im, x);
        let im = e.un(Op::Abs, im);
        e.bin(Op::Le, im, zero)
    };
    match r {
        Range::NonNeg => {
            let c = e.bin(Op::Ge, x, zero);
            let r = real(e);
            e.bin(Op::Mul, c, r)
        }
        Range::Positive => {
            let c = e.bin(Op::Gt, x, zero);
            let r = real(e);
            e.bin(Op::Mul, c, r)
        }
        Range::Negative => {
            let c = e.bin(Op::Lt, x, zero);
            let r = real(e);
            e.bin(Op::Mul, c, r)
        }
        Range::RePositive => e.bin(Op::Gt, x, zero),
        Range::UnitDisc => {
            let m = e.un(Op::Abs, x);
            let one = e.konst(1.0, 0.0);
            e.bin(Op::Le, m, one)
        }
        Range::NonZero => {
            let m = e.un(Op::Abs, x);
            let c = e.bin(Op::Gt, m, zero);
            let inf = e.konst(f64::INFINITY, 0.0);
            let f = e.bin(Op::Lt, m, inf);
            e.bin(Op::Mul, c, f)
        }
    }
}

/// The results `outs` of a call of `f` with argument values `args`, made
/// NaN where an argument leaves its physical range (`Builtin::ranges`), so
/// the domain check explains the call instead of a finite number being
/// shown. The NaN has a zero imaginary part, so a real result stays real
/// by construction (`batch::real_slots`).
pub fn guard_ranges(e: &mut Emitter, f: &Builtin, args: &[Operand], outs: Vec<Operand>) -> Vec<Operand> {
    use crate::engine::ops::Op;
    let mut cond: Option<Operand> = None;
    for &(i, r) in f.ranges {
        let Some(&x) = args.get(i) else { continue };
        let c = in_range(e, x, r);
        cond = Some(match cond {
            None => c,
            Some(p) => e.bin(Op::Mul, p, c),
        });
    }
    let Some(cond) = cond else { return outs };
    let nan = e.konst(f64::NAN, 0.0);
    outs.into_iter().map(|o| e.select(cond, o, nan)).collect()
}
