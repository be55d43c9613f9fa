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

pub mod math;

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

pub enum Impl {
    Lower(LowerFn),
    Scalar(ScalarFn),
}

pub struct Param {
    pub name: &'static str,
    /// The unit expected, as shown in the listing: `Ω`, `H`, `any`.
    pub unit: &'static str,
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
}

/// Every built-in function, in listing order.
pub fn library() -> &'static [Builtin] {
    static LIB: OnceLock<Vec<Builtin>> = OnceLock::new();
    LIB.get_or_init(|| {
        let mut v = Vec::new();
        v.extend(math::funcs());
        v
    })
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
