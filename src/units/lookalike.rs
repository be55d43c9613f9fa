//! Characters that look like the ones the language uses.
//!
//! Two pairs are the same character to Unicode and are accepted: the ohm
//! sign U+2126 is canonically equivalent to Greek capital omega U+03A9
//! (Unicode Standard, ch. 22, "Letterlike Symbols"; its NFC form is
//! U+03A9), and the micro sign U+00B5 is compatibility-equivalent to Greek
//! small mu U+03BC (NFKC), so both are the micro prefix, as is `u`. Other
//! characters that only look alike are refused, with a hint that names the
//! character and says what to type.

use std::borrow::Cow;

/// A look-alike the language accepts: the character, its Unicode name, and
/// the spelling it reads as.
pub struct Accepted {
    pub ch: char,
    pub name: &'static str,
    pub reads_as: char,
    pub reads_as_name: &'static str,
}

/// Accepted look-alikes. The ohm sign is folded to Ω before a unit is
/// looked up; both micro characters are prefixes in their own right
/// (`table::PREFIXES`), so `µF` and `μF` keep the spelling written.
pub const ACCEPTED: &[Accepted] = &[
    Accepted {
        ch: '\u{2126}',
        name: "OHM SIGN",
        reads_as: '\u{03A9}',
        reads_as_name: "GREEK CAPITAL LETTER OMEGA",
    },
    Accepted {
        ch: '\u{00B5}',
        name: "MICRO SIGN",
        reads_as: '\u{03BC}',
        reads_as_name: "GREEK SMALL LETTER MU",
    },
];

/// Characters that look like one the language uses but are refused: the
/// character, its Unicode name, and what to type instead.
pub const REFUSED: &[(char, &str, &str)] = &[
    (
        '\u{03C9}',
        "GREEK SMALL LETTER OMEGA",
        "the ohm sign is a capital omega, `Ω`, or write `ohm`",
    ),
    ('\u{2127}', "INVERTED OHM SIGN", "admittance is in siemens, `S`"),
    (
        '\u{00BA}',
        "MASCULINE ORDINAL INDICATOR",
        "write the degree sign `°` (U+00B0) or `deg`",
    ),
    ('\u{02DA}', "RING ABOVE", "write the degree sign `°` (U+00B0) or `deg`"),
    (
        '\u{2218}',
        "RING OPERATOR",
        "write the degree sign `°` (U+00B0) or `deg`",
    ),
    ('\u{2212}', "MINUS SIGN", "write the minus as a hyphen, `-`"),
    ('\u{2013}', "EN DASH", "write the minus as a hyphen, `-`"),
    ('\u{2014}', "EM DASH", "write the minus as a hyphen, `-`"),
    ('\u{22C5}', "DOT OPERATOR", "multiply with `*` or `·` (U+00B7)"),
    ('\u{2219}', "BULLET OPERATOR", "multiply with `*` or `·` (U+00B7)"),
    (
        '\u{2221}',
        "MEASURED ANGLE",
        "the polar sign is `∠` (U+2220), or write `/_`",
    ),
    (
        '\u{2222}',
        "SPHERICAL ANGLE",
        "the polar sign is `∠` (U+2220), or write `/_`",
    ),
    (
        '\u{29A3}',
        "REVERSED ANGLE",
        "the polar sign is `∠` (U+2220), or write `/_`",
    ),
    ('\u{2225}', "PARALLEL TO", "parallel is written `||`"),
    ('\u{2016}', "DOUBLE VERTICAL LINE", "parallel is written `||`"),
];

/// `text` with the accepted look-alikes that have a canonical spelling
/// (the ohm sign) replaced by it.
pub fn fold(text: &str) -> Cow<'_, str> {
    if text.contains('\u{2126}') {
        Cow::Owned(text.replace('\u{2126}', "\u{03A9}"))
    } else {
        Cow::Borrowed(text)
    }
}

/// A hint for the first refused look-alike in `text`, naming it.
pub fn hint(text: &str) -> Option<String> {
    text.chars().find_map(|c| {
        REFUSED
            .iter()
            .find(|(r, _, _)| *r == c)
            .map(|(r, name, fix)| format!("`{r}` is U+{:04X} {name}, which only looks alike: {fix}", *r as u32))
    })
}

/// One line for `ohmsheet units`: the accepted look-alikes.
pub fn listing() -> String {
    ACCEPTED
        .iter()
        .map(|a| {
            format!(
                "{} (U+{:04X} {}) = {} (U+{:04X} {})",
                a.ch, a.ch as u32, a.name, a.reads_as, a.reads_as as u32, a.reads_as_name
            )
        })
        .collect::<Vec<_>>()
        .join("; ")
}
