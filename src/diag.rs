//! Diagnostics: every error the user sees is one `Diagnostic` with a span
//! and an optional hint, rendered in one place (`render`).
//!
//! The wording of each message lives next to the code that detects it, but
//! each has a stable `ErrorCode` so the error catalogue (docs/errors.md) and
//! the tests can name it.

use std::fmt;
use std::ops::Range;
use std::path::PathBuf;

use codespan_reporting::diagnostic::{Diagnostic as CsDiagnostic, Label};
use codespan_reporting::files::{self, Files};
use codespan_reporting::term;
use codespan_reporting::term::termcolor::{ColorChoice, StandardStream, WriteColor};

/// Index of a source file in a `SourceMap`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Default)]
pub struct FileId(pub u32);

/// A byte range in one source file.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub struct Span {
    pub file: FileId,
    pub start: u32,
    pub end: u32,
}

impl Span {
    pub fn new(file: FileId, start: usize, end: usize) -> Span {
        Span {
            file,
            start: start as u32,
            end: end as u32,
        }
    }
    pub fn range(self) -> Range<usize> {
        self.start as usize..self.end as usize
    }
    /// The smallest span covering both.
    pub fn to(self, other: Span) -> Span {
        Span {
            file: self.file,
            start: self.start.min(other.start),
            end: self.end.max(other.end),
        }
    }
}

/// One loaded source text.
#[derive(Clone, Debug)]
pub struct SourceFile {
    /// The name shown in messages (the path as the user gave it).
    pub name: String,
    pub path: Option<PathBuf>,
    pub text: String,
    /// Byte offset of the start of each line.
    line_starts: Vec<usize>,
}

impl SourceFile {
    pub fn new(name: impl Into<String>, path: Option<PathBuf>, text: String) -> SourceFile {
        let mut line_starts = vec![0];
        for (i, b) in text.bytes().enumerate() {
            if b == b'\n' {
                line_starts.push(i + 1);
            }
        }
        SourceFile {
            name: name.into(),
            path,
            text,
            line_starts,
        }
    }

    /// 1-based line and column (in characters) of a byte offset.
    pub fn line_col(&self, offset: usize) -> (usize, usize) {
        let line = match self.line_starts.binary_search(&offset) {
            Ok(i) => i,
            Err(i) => i - 1,
        };
        let start = self.line_starts[line];
        let end = offset.min(self.text.len());
        let col = self.text.get(start..end).map_or(1, |s| s.chars().count() + 1);
        (line + 1, col)
    }

    /// The text of a span.
    pub fn slice(&self, span: Span) -> &str {
        self.text.get(span.range()).unwrap_or("")
    }
}

/// All source texts of one evaluation: the sheet and whatever it includes,
/// plus pseudo-files for command-line overrides and session input.
#[derive(Clone, Debug, Default)]
pub struct SourceMap {
    files: Vec<SourceFile>,
}

impl SourceMap {
    pub fn new() -> SourceMap {
        SourceMap::default()
    }
    pub fn add(&mut self, file: SourceFile) -> FileId {
        self.files.push(file);
        FileId((self.files.len() - 1) as u32)
    }
    pub fn get(&self, id: FileId) -> &SourceFile {
        &self.files[id.0 as usize]
    }
    pub fn files(&self) -> &[SourceFile] {
        &self.files
    }
    pub fn slice(&self, span: Span) -> &str {
        self.get(span.file).slice(span)
    }
    /// `name:line:col` of the start of a span.
    pub fn location(&self, span: Span) -> String {
        let f = self.get(span.file);
        let (l, c) = f.line_col(span.start as usize);
        format!("{}:{}:{}", f.name, l, c)
    }
    pub fn line_of(&self, span: Span) -> usize {
        self.get(span.file).line_col(span.start as usize).0
    }
}

/// Diagnostics are rendered straight from the source map, using the line
/// starts each file already has.
impl<'a> Files<'a> for SourceMap {
    type FileId = usize;
    type Name = &'a str;
    type Source = &'a str;

    fn name(&'a self, id: usize) -> Result<&'a str, files::Error> {
        self.files
            .get(id)
            .map(|f| f.name.as_str())
            .ok_or(files::Error::FileMissing)
    }

    fn source(&'a self, id: usize) -> Result<&'a str, files::Error> {
        self.files
            .get(id)
            .map(|f| f.text.as_str())
            .ok_or(files::Error::FileMissing)
    }

    fn line_index(&'a self, id: usize, byte_index: usize) -> Result<usize, files::Error> {
        let f = self.files.get(id).ok_or(files::Error::FileMissing)?;
        Ok(f.line_starts.binary_search(&byte_index).unwrap_or_else(|next| next - 1))
    }

    fn line_range(&'a self, id: usize, line_index: usize) -> Result<Range<usize>, files::Error> {
        let f = self.files.get(id).ok_or(files::Error::FileMissing)?;
        let start = |i: usize| match i.cmp(&f.line_starts.len()) {
            std::cmp::Ordering::Less => Ok(f.line_starts[i]),
            std::cmp::Ordering::Equal => Ok(f.text.len()),
            std::cmp::Ordering::Greater => Err(files::Error::LineTooLarge {
                given: i,
                max: f.line_starts.len() - 1,
            }),
        };
        Ok(start(line_index)?..start(line_index + 1)?)
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Severity {
    Error,
    Warning,
}

/// Stable names for every error a user can meet. `docs/errors.md` has an
/// example of each, and a test keeps the two in step: a new variant needs
/// a catalogue entry.
macro_rules! error_codes {
    ($($variant:ident => $name:literal,)*) => {
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
        pub enum ErrorCode {
            $($variant,)*
        }

        impl ErrorCode {
            /// Every code, in declaration order.
            pub const ALL: &'static [ErrorCode] = &[$(ErrorCode::$variant,)*];

            /// The kebab-case name shown in brackets after `error`.
            pub fn name(self) -> &'static str {
                match self {
                    $(ErrorCode::$variant => $name,)*
                }
            }
        }
    };
}

error_codes! {
    NotUtf8 => "not-utf8",
    LineTooLong => "line-too-long",
    NestingTooDeep => "nesting-too-deep",
    Syntax => "syntax",
    EmptySheet => "empty-sheet",
    BareExpression => "bare-expression",
    NetworkBlock => "network-block",
    NetworkElement => "network-element",
    NetworkShape => "network-shape",
    NetworkTooLarge => "network-too-large",
    BadNumber => "bad-number",
    UnknownUnit => "unknown-unit",
    AmbiguousUnit => "ambiguous-unit",
    UnitNotAllowed => "unit-not-allowed",
    ReservedName => "reserved-name",
    DuplicateCell => "duplicate-cell",
    UnknownName => "unknown-name",
    UnknownFunction => "unknown-function",
    UnknownField => "unknown-field",
    Cycle => "cycle",
    TooManyCells => "too-many-cells",
    DimensionMismatch => "dimension-mismatch",
    NetworkOperand => "network-operand",
    BadExponent => "bad-exponent",
    FunctionArgs => "function-args",
    AngleAmbiguous => "angle-ambiguous",
    AmbiguousOperators => "ambiguous-operators",
    TrigRadians => "trig-radians",
    KindMismatch => "kind-mismatch",
    BrokenCell => "broken-cell",
    NotARecord => "not-a-record",
    RecordAsValue => "record-as-value",
    BadTolerance => "bad-tolerance",
    ToleranceNotOnInput => "tolerance-not-on-input",
    BadInputTolerance => "bad-input-tolerance",
    ToleranceUnit => "tolerance-unit",
    NoTolerances => "no-tolerances",
    UnknownDirective => "unknown-directive",
    BadDirective => "bad-directive",
    NotANumber => "not-a-number",
    InfiniteValue => "infinite-value",
    InfiniteElement => "infinite-element",
    BadOverride => "bad-override",
    BadCases => "bad-cases",
    IncludePath => "include-path",
    IncludeCycle => "include-cycle",
    NameClash => "name-clash",
    BadRange => "bad-range",
    NotAnInput => "not-an-input",
    TooManyPoints => "too-many-points",
    SearchFailed => "search-failed",
    BadSearch => "bad-search",
    ControlCharacter => "control-character",
    Io => "io",
}

/// Whether a character may not reach a terminal or be hidden in a sheet:
/// C0 controls other than tab and newline, DEL, C1 controls (U+0080 to
/// U+009F; U+009B starts a control sequence like ESC [), and the
/// bidirectional overrides and isolates that make text display in another
/// order than it is read (Unicode TR9; the "Trojan Source" attack,
/// CVE-2021-42574).
pub fn is_unsafe_char(c: char) -> bool {
    (c < ' ' && c != '\t' && c != '\n')
        || ('\u{7f}'..='\u{9f}').contains(&c)
        || ('\u{202a}'..='\u{202e}').contains(&c)
        || ('\u{2066}'..='\u{2069}').contains(&c)
}

/// `s` with every unsafe character (see `is_unsafe_char`) replaced by as
/// many `?` as it has bytes, so byte offsets into it stay valid.
pub fn terminal_safe(s: &str) -> std::borrow::Cow<'_, str> {
    if !s.chars().any(is_unsafe_char) {
        return std::borrow::Cow::Borrowed(s);
    }
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        if is_unsafe_char(c) {
            out.extend(std::iter::repeat_n('?', c.len_utf8()));
        } else {
            out.push(c);
        }
    }
    std::borrow::Cow::Owned(out)
}

/// A writer that passes colour changes through and filters text with
/// `terminal_safe`.
struct SafeText<'a>(&'a mut dyn WriteColor);

impl std::io::Write for SafeText<'_> {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        match std::str::from_utf8(buf) {
            Ok(s) => self.0.write_all(terminal_safe(s).as_bytes())?,
            Err(_) => {
                let b: Vec<u8> = buf
                    .iter()
                    .map(|&b| {
                        if (b < b' ' && b != b'\t' && b != b'\n') || b == 0x7f {
                            b'?'
                        } else {
                            b
                        }
                    })
                    .collect();
                self.0.write_all(&b)?
            }
        }
        Ok(buf.len())
    }
    fn flush(&mut self) -> std::io::Result<()> {
        self.0.flush()
    }
}

impl WriteColor for SafeText<'_> {
    fn supports_color(&self) -> bool {
        self.0.supports_color()
    }
    fn set_color(&mut self, spec: &codespan_reporting::term::termcolor::ColorSpec) -> std::io::Result<()> {
        self.0.set_color(spec)
    }
    fn reset(&mut self) -> std::io::Result<()> {
        self.0.reset()
    }
}

/// A message about a place in the source.
#[derive(Clone, Debug, PartialEq)]
pub struct Diagnostic {
    pub severity: Severity,
    pub code: ErrorCode,
    pub message: String,
    /// The spot the caret points at; `None` for errors with no source place
    /// (a missing file, a bad command-line flag).
    pub span: Option<Span>,
    /// Short text printed under the caret.
    pub label: String,
    /// Further places, each with its own short text.
    pub secondary: Vec<(Span, String)>,
    pub hint: Option<String>,
    /// The hint as a repair a tool may apply as it stands (an editor's
    /// code action): replace the text at the span with this text.
    /// (Boxed: most diagnostics have none, and a `Diagnostic` stays small.)
    pub fix: Option<Box<Fix>>,
}

/// A machine-applicable repair: `text` in place of the text at `span`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Fix {
    pub span: Span,
    pub text: String,
}

impl Diagnostic {
    pub fn error(code: ErrorCode, span: Span, message: impl Into<String>) -> Diagnostic {
        Diagnostic {
            severity: Severity::Error,
            code,
            message: message.into(),
            span: Some(span),
            label: String::new(),
            secondary: Vec::new(),
            hint: None,
            fix: None,
        }
    }
    pub fn unplaced(code: ErrorCode, message: impl Into<String>) -> Diagnostic {
        Diagnostic {
            severity: Severity::Error,
            code,
            message: message.into(),
            span: None,
            label: String::new(),
            secondary: Vec::new(),
            hint: None,
            fix: None,
        }
    }
    pub fn warning(mut self) -> Diagnostic {
        self.severity = Severity::Warning;
        self
    }
    pub fn with_label(mut self, label: impl Into<String>) -> Diagnostic {
        self.label = label.into();
        self
    }
    /// A repair to offer with the hint: `text` in place of `span`.
    pub fn with_fix(mut self, span: Span, text: impl Into<String>) -> Diagnostic {
        self.fix = Some(Box::new(Fix {
            span,
            text: text.into(),
        }));
        self
    }
    pub fn with_hint(mut self, hint: impl Into<String>) -> Diagnostic {
        self.hint = Some(hint.into());
        self
    }
    pub fn with_secondary(mut self, span: Span, text: impl Into<String>) -> Diagnostic {
        self.secondary.push((span, text.into()));
        self
    }
    pub fn is_error(&self) -> bool {
        self.severity == Severity::Error
    }

    /// Render to a plain string (no colour): the form tests compare.
    pub fn render_plain(&self, sources: &SourceMap) -> String {
        let mut buf = codespan_reporting::term::termcolor::NoColor::new(Vec::new());
        self.emit(sources, &mut buf);
        String::from_utf8_lossy(&buf.into_inner()).into_owned()
    }

    /// Render to a string, with ANSI colours when `color` is set.
    pub fn render(&self, sources: &SourceMap, color: bool) -> String {
        if !color {
            return self.render_plain(sources);
        }
        let mut buf = codespan_reporting::term::termcolor::Ansi::new(Vec::new());
        self.emit(sources, &mut buf);
        String::from_utf8_lossy(&buf.into_inner()).into_owned()
    }

    fn emit(&self, sources: &SourceMap, out: &mut dyn WriteColor) {
        // Whatever a message quotes from a file goes through a filter, so a
        // sheet cannot send control sequences to the user's terminal.
        let mut out = SafeText(out);
        self.emit_raw(sources, &mut out);
    }

    fn emit_raw(&self, sources: &SourceMap, out: &mut dyn WriteColor) {
        let mut d = match self.severity {
            Severity::Error => CsDiagnostic::error(),
            Severity::Warning => CsDiagnostic::warning(),
        }
        .with_code(self.code.name())
        .with_message(&self.message);
        let mut labels = Vec::new();
        if let Some(sp) = self.span {
            labels.push(Label::primary(sp.file.0 as usize, sp.range()).with_message(&self.label));
        }
        for (sp, text) in &self.secondary {
            labels.push(Label::secondary(sp.file.0 as usize, sp.range()).with_message(text));
        }
        d = d.with_labels(labels);
        if let Some(h) = &self.hint {
            d = d.with_notes(vec![format!("hint: {h}")]);
        }
        let config = term::Config::default();
        // The source map itself is the file database: no copy of the
        // sheet's text per message, however big the sheet.
        let _ = term::emit_to_write_style(out, &config, sources, &d);
    }

    /// Render to stderr, in colour when stderr is a terminal.
    pub fn eprint(&self, sources: &SourceMap) {
        let choice = if std::io::IsTerminal::is_terminal(&std::io::stderr()) {
            ColorChoice::Auto
        } else {
            ColorChoice::Never
        };
        let stream = StandardStream::stderr(choice);
        let mut lock = stream.lock();
        self.emit(sources, &mut lock);
    }
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.message)
    }
}

/// The closest of `candidates` to `word`, if it is close enough to be a
/// likely typo: a small edit distance (one edit per three characters, at
/// least one), or a high Jaro–Winkler similarity for longer words.
pub fn did_you_mean<'a>(word: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let mut best: Option<(&str, usize, f64)> = None;
    let n = word.chars().count();
    let limit = if n <= 1 { 0 } else { (n / 3).max(1) };
    for c in candidates {
        if c == word {
            continue;
        }
        let dist = if c.to_lowercase() == word.to_lowercase() {
            0
        } else {
            strsim::levenshtein(word, c)
        };
        let jw = strsim::jaro_winkler(word, c);
        if dist > limit && jw <= 0.88 {
            continue;
        }
        let better = match best {
            None => true,
            Some((_, bd, bj)) => dist < bd || (dist == bd && jw > bj),
        };
        if better {
            best = Some((c, dist, jw));
        }
    }
    best.map(|(c, _, _)| c)
}
