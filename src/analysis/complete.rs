//! What may be typed at a place of the text, and the call being typed.
//!
//! The context is read from the text of the line before the cursor (a
//! half-typed line does not parse, so it is not parsed): after `@` at the
//! start of a line, directive names; after `NAME.`, the fields of the
//! record cell `NAME`; right after a number (`4.7 k`, `4.7k`), units; inside
//! a network block, element forms after `=` and the block's node and
//! element names in the node arguments; inside `net_v(plant, …)` and the
//! other result functions, the network's names; elsewhere cells (with
//! their values), functions (with their parameters' units) and constants.
//! Answers are plain data with byte offsets; `src/lsp/complete.rs`
//! translates them.

use std::ops::Range;

use super::document::Document;
use super::values::cell_vals;
use super::Display;
use crate::engine::model::signature as func_signature;
use crate::engine::Role;
use crate::funcs::{self, Shape};
use crate::syntax::ast::{ExprKind, StmtKind, NETWORK_ELEMENTS, NETWORK_RESULTS};
use crate::syntax::parse_line;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ItemKind {
    Cell,
    Function,
    Constant,
    Unit,
    Directive,
    Field,
    /// A network element form (`branch`, `emf`, …) or a network's element.
    Element,
    Node,
    Keyword,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Item {
    pub label: String,
    pub kind: ItemKind,
    /// One line: a cell's value, a function's signature, a unit's meaning.
    pub detail: String,
    /// More about it (a function's summary, result and source).
    pub doc: Option<String>,
    /// The text to put in place of the word typed so far.
    pub insert: String,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Completions {
    /// The bytes the chosen item replaces (the word typed so far).
    pub replace: Range<usize>,
    pub items: Vec<Item>,
}

/// The call whose brackets hold the cursor.
#[derive(Clone, Debug, PartialEq)]
pub struct Signature {
    /// `name(p: unit, …)`.
    pub label: String,
    /// Byte ranges of the parameters in `label`.
    pub params: Vec<Range<usize>>,
    /// The parameter the cursor is in (the last one of a variadic call
    /// once past it).
    pub active: usize,
    pub doc: String,
}

/// Directives a sheet understands, with what each does.
pub const DIRECTIVES: &[(&str, &str)] = &[
    ("include", "merge a library sheet: @include \"path\""),
    (
        "override",
        "replace a value of an included sheet here: @override NAME = FORMULA",
    ),
    ("sweep", "a sweep for reports: @sweep X = from .. to, N points : shown"),
    ("note", "free text about a cell (@note NAME \"text\") or the sheet"),
    ("amplitude", "phasors are rms (the default) or peak: @amplitude peak"),
    ("title", "the sheet's title (metadata)"),
    ("project", "the project (metadata)"),
    ("prepared", "who prepared it (metadata)"),
    ("checked", "who checked it (metadata)"),
    ("revision", "its revision (metadata)"),
    ("date", "its date (metadata)"),
];

/// The network forms (handled by the network solver, not the function
/// table): element forms of a block, and the functions that read a
/// solved network. Name, parameters (with units), what it is.
pub const NETWORK_FORMS: &[(&str, &[&str], &str)] = &[
    (
        "branch",
        &["a: node", "b: node", "value: Ω, S, H, F or pu"],
        "an impedance or admittance between two nodes",
    ),
    (
        "emf",
        &["plus: node", "minus: node", "E: V", "Z: Ω (optional)"],
        "a voltage source, + at `plus`, with an optional internal impedance",
    ),
    (
        "inject",
        &["out: node", "back: node", "I: A", "shunt: Ω (optional)"],
        "a current source driving I out of `out`",
    ),
    (
        "vgain",
        &["a: node", "b: node", "c: node", "d: node", "μ: plain"],
        "a voltage source V(a,b) = μ·V(c,d)",
    ),
    (
        "transadm",
        &["a: node", "b: node", "c: node", "d: node", "g: S"],
        "a current source g·V(c,d), out of `a`",
    ),
    (
        "transimp",
        &["a: node", "b: node", "E: element", "r: Ω"],
        "a voltage source V(a,b) = r·I(E)",
    ),
    (
        "igain",
        &["a: node", "b: node", "E: element", "β: plain"],
        "a current source β·I(E), out of `a`",
    ),
    (
        "xformer",
        &["p1: node", "p2: node", "s1: node", "s2: node", "n: plain"],
        "an ideal transformer V(p1,p2) = n·V(s1,s2)",
    ),
    (
        "mutual",
        &["L1: element", "L2: element", "k: plain, H or Ω"],
        "coupling between two branches",
    ),
    (
        "net_v",
        &["network", "a: node", "b: node (optional)"],
        "a node's voltage to ground, or V(a) − V(b)",
    ),
    ("net_i", &["network", "element"], "an element's current"),
    (
        "net_s",
        &["network", "element"],
        "an element's complex power (absorbed by a branch, delivered by a source)",
    ),
    (
        "net_thevenin",
        &["network", "a: node", "b: node"],
        "the Thevenin equivalent between nodes a and b: a record V, Z, I",
    ),
    (
        "net_z",
        &["network", "i: node", "j: node"],
        "the voltage at node i for 1 A injected at node j, sources zeroed",
    ),
    (
        "net_y",
        &["network", "i: node", "j: node"],
        "entry (i, j) of the nodal admittance matrix",
    ),
    (
        "net_balance",
        &["network"],
        "a record `delivered`, `absorbed` of complex power",
    ),
];

fn form_label(f: &(&str, &[&str], &str)) -> String {
    format!("{}({})", f.0, f.1.join(", "))
}

fn form_item(f: &(&str, &[&str], &str), kind: ItemKind) -> Item {
    Item {
        label: f.0.to_string(),
        kind,
        detail: form_label(f),
        doc: Some(format!("{} (see docs/networks.md)", f.2)),
        insert: f.0.to_string(),
    }
}

fn is_word(c: char) -> bool {
    c.is_alphanumeric() || c == '_'
}

/// Start of the word that ends at `pos` of `s`.
fn word_start(s: &str, pos: usize) -> usize {
    s[..pos]
        .char_indices()
        .rev()
        .take_while(|&(_, c)| is_word(c))
        .last()
        .map_or(pos, |(i, _)| i)
}

/// Text of `s` with comments (from a `#` outside quotes) removed.
fn code_part(s: &str) -> &str {
    let mut quoted = false;
    for (i, c) in s.char_indices() {
        match c {
            '"' => quoted = !quoted,
            '#' if !quoted => return &s[..i],
            _ => {}
        }
    }
    s
}

/// The network block holding line `line`: its name and the lines of its
/// elements (None outside a block).
fn network_at(doc: &Document, line: usize) -> Option<(String, Range<usize>)> {
    let head = (0..line).rev().find_map(|i| {
        let t = code_part(doc.line_text(i)).trim();
        if t == "end" {
            Some(None)
        } else {
            t.strip_prefix("network ")
                .map(|r| Some((i, r.split_whitespace().next().unwrap_or("").to_string())))
        }
    })??;
    let end = (head.0 + 1..doc.line_count())
        .find(|&i| {
            let t = code_part(doc.line_text(i)).trim();
            t == "end" || t.starts_with("network ")
        })
        .unwrap_or(doc.line_count());
    (line < end).then_some((head.1, head.0 + 1..end))
}

/// The network block named `name`.
fn network_named(doc: &Document, name: &str) -> Option<Range<usize>> {
    let head = (0..doc.line_count()).find(|&i| {
        let t = doc.line_text(i).trim_start();
        t.strip_prefix("network ")
            .and_then(|r| r.split_whitespace().next())
            .is_some_and(|n| n == name)
    })?;
    network_at(doc, head + 1).map(|(_, r)| r)
}

/// The element and node names of the network whose element lines are
/// `lines`, each with its element form.
fn network_names(doc: &Document, lines: Range<usize>) -> (Vec<(String, String)>, Vec<String>) {
    let mut elements = Vec::new();
    let mut nodes: Vec<String> = vec!["ground".into()];
    for i in lines {
        let Ok(Some(stmt)) = parse_line(doc.line_text(i), crate::diag::FileId(u32::MAX), 0, 1) else {
            continue;
        };
        let StmtKind::Def(d) = &stmt.kind else { continue };
        let ExprKind::Call { func, args } = &d.expr.kind else {
            continue;
        };
        let Some(&(form, n)) = NETWORK_ELEMENTS.iter().find(|(f, _)| *f == func.name) else {
            continue;
        };
        elements.push((d.name.name.clone(), form.to_string()));
        for (k, a) in args.iter().take(n).enumerate() {
            if element_arg(form, k) {
                continue;
            }
            if let ExprKind::Name(id) = &a.kind {
                if !nodes.contains(&id.name) {
                    nodes.push(id.name.clone());
                }
            }
        }
    }
    (elements, nodes)
}

/// Whether argument `k` of element form `form` names an element (not a
/// node).
fn element_arg(form: &str, k: usize) -> bool {
    matches!((form, k), ("transimp" | "igain", 2) | ("mutual", 0 | 1))
}

/// The innermost call whose `(` is open before `pos` on this line: the
/// function's name, the byte offset of its `(`, and how many arguments
/// come before the cursor's.
fn open_call(line: &str, pos: usize) -> Option<(&str, usize, usize)> {
    let mut depth = 0usize;
    let mut commas = 0usize;
    let before = &line[..pos];
    for (i, c) in before.char_indices().rev() {
        match c {
            ')' | ']' => depth += 1,
            '(' | '[' if depth > 0 => depth -= 1,
            '(' => {
                let s = word_start(before, i);
                let name = &before[s..i];
                if name.is_empty() || name.starts_with(|c: char| c.is_ascii_digit()) {
                    // A bracket of grouping: the call, if any, is outside.
                    commas = 0;
                    continue;
                }
                return Some((name, i, commas));
            }
            '[' => return None,
            ',' if depth == 0 => commas += 1,
            '=' if depth == 0 && !before[..i].ends_with(['<', '>', '!', '~', '=']) => return None,
            _ => {}
        }
    }
    None
}

fn item(label: &str, kind: ItemKind, detail: String) -> Item {
    Item {
        label: label.to_string(),
        kind,
        detail,
        doc: None,
        insert: label.to_string(),
    }
}

fn function_item(f: &funcs::Builtin) -> Item {
    let mut doc = format!("{}\n\nreturns {}", f.summary, f.returns);
    if !f.source.is_empty() {
        doc.push_str(&format!("\n\nsource: {}", f.source));
    }
    Item {
        label: f.name.to_string(),
        kind: ItemKind::Function,
        detail: func_signature(f),
        doc: Some(doc),
        insert: f.name.to_string(),
    }
}

/// Units, and when `typed` starts with an SI prefix, the prefixed forms.
fn unit_items(typed: &str) -> Vec<Item> {
    use crate::units::table::{all_symbols, lookup_unit, prefix_factor};
    let mut words: Vec<String> = all_symbols().map(str::to_string).collect();
    for p in ["k", "M", "G", "m", "µ", "u", "n", "p"] {
        if !typed.starts_with(p) {
            continue;
        }
        let Some(pf) = prefix_factor(p) else { continue };
        for s in all_symbols() {
            let (Ok(base), Ok(u)) = (lookup_unit(s), lookup_unit(&format!("{p}{s}"))) else {
                continue;
            };
            if u.q == base.q && (u.factor - pf * base.factor).abs() <= 1e-9 * u.factor.abs() {
                words.push(format!("{p}{s}"));
            }
        }
    }
    let mut v: Vec<Item> = Vec::new();
    for s in &words {
        let s = s.as_str();
        if v.iter().any(|i| i.label == s) {
            continue;
        }
        let Ok(u) = crate::units::table::lookup_unit(s) else {
            continue;
        };
        let what = u.q.describe();
        let detail = if u.factor == 1.0 {
            what
        } else {
            let base = crate::units::format::base_symbol(u.q);
            format!("{what}; 1 {s} = {} {base}", crate::units::format::fmt_sig(u.factor, 6))
        };
        v.push(item(s, ItemKind::Unit, detail));
    }
    v
}

/// Completions at byte `offset` of the document's text.
pub fn complete(doc: &Document, display: Display, offset: usize) -> Completions {
    let offset = offset.min(doc.text().len());
    let line = doc.line_of(offset);
    let range = doc.line_range(line);
    let pos = offset.clamp(range.start, range.end) - range.start;
    let text = doc.line_text(line);
    let code = code_part(text);
    let none = Completions {
        replace: offset..offset,
        items: Vec::new(),
    };
    if pos > code.len() {
        // In a comment.
        return none;
    }
    let mut start = word_start(text, pos);
    let before_word = &text[..start];
    let at = |s: usize| range.start + s..range.start + pos;

    // A number with its unit run on (`4.7k`): the unit starts after the digits.
    let word = &text[start..pos];
    if word.starts_with(|c: char| c.is_ascii_digit()) {
        let digits = word
            .char_indices()
            .find(|&(_, c)| !(c.is_ascii_digit() || c == '.'))
            .map_or(word.len(), |(i, _)| i);
        let exp =
            word[digits..].starts_with(['e', 'E']) && word[digits + 1..].starts_with(|c: char| c.is_ascii_digit());
        if exp || digits == word.len() {
            return none;
        }
        start += digits;
        return filtered(at(start), &text[start..pos], unit_items(&text[start..pos]));
    }
    let typed = &text[start..pos];

    // A directive name.
    if let Some(d) = before_word.trim_start().strip_prefix('@') {
        if d.is_empty() {
            let items = DIRECTIVES
                .iter()
                .map(|(n, what)| item(n, ItemKind::Directive, (*what).to_string()))
                .collect();
            return filtered(at(start), typed, items);
        }
    }
    // A record's field.
    if let Some(head) = before_word.strip_suffix('.') {
        let s = word_start(head, head.len());
        let name = &head[s..];
        let m = &doc.engine.model;
        let Some(id) = m.id(name) else { return none };
        let c = &m.cells[id as usize];
        let Some(Shape::Record(fields)) = &c.shape else {
            return none;
        };
        let vals = doc.engine.values(id);
        let items = fields
            .iter()
            .enumerate()
            .map(|(k, (f, q))| {
                let v = if c.error.is_none() {
                    vals.get(k)
                        .map(|&z| super::values::one(z, *q, None, display.style, display.polar))
                } else {
                    None
                };
                item(f, ItemKind::Field, v.map_or_else(|| q.describe(), |v| format!("= {v}")))
            })
            .collect();
        return filtered(at(start), typed, items);
    }
    // A unit after a number (`4.7 k`).
    let trimmed = before_word.trim_end();
    if trimmed.len() < before_word.len() && trimmed.ends_with(|c: char| c.is_ascii_digit()) {
        let num_start = trimmed
            .char_indices()
            .rev()
            .take_while(|&(_, c)| is_word(c) || c == '.')
            .last()
            .map_or(trimmed.len(), |(i, _)| i);
        if trimmed[num_start..].starts_with(|c: char| c.is_ascii_digit()) {
            return filtered(at(start), typed, unit_items(typed));
        }
    }

    // Network names: inside a block's element line, or a result function.
    let block = network_at(doc, line);
    if let Some((func, _, k)) = open_call(code, pos) {
        let n = crate::syntax::ast::name_args(func);
        if NETWORK_RESULTS.contains(&func) {
            if k == 0 {
                let m = &doc.engine.model;
                let items = (0..doc.line_count())
                    .filter_map(|i| {
                        let t = doc.line_text(i).trim_start().strip_prefix("network ")?;
                        let name = t.split_whitespace().next()?;
                        Some(item(name, ItemKind::Cell, value_of(doc, display, m.id(name))))
                    })
                    .collect();
                return filtered(at(start), typed, items);
            }
            let net = code[..code.len().min(pos)]
                .rfind(func)
                .map(|i| &code[i + func.len()..])
                .and_then(|r| r.trim_start().strip_prefix('('))
                .and_then(|r| r.split(',').next())
                .map(str::trim)
                .unwrap_or("");
            if let Some(lines) = network_named(doc, net) {
                let elements = matches!(func, "net_i" | "net_s");
                return filtered(at(start), typed, names_items(doc, lines, !elements, elements));
            }
            return none;
        }
        if n > 0 && k < n {
            if let Some((_, lines)) = &block {
                let elem = element_arg(func, k);
                return filtered(at(start), typed, names_items(doc, lines.clone(), !elem, elem));
            }
        }
    }
    if let Some((_, _)) = &block {
        // After `NAME =` on an element line: the element forms.
        let lhs = before_word.trim();
        if lhs.ends_with('=') && !lhs[..lhs.len() - 1].contains(['(', '=']) {
            let items = NETWORK_FORMS
                .iter()
                .filter(|f| NETWORK_ELEMENTS.iter().any(|(e, _)| *e == f.0))
                .map(|f| form_item(f, ItemKind::Element))
                .collect();
            return filtered(at(start), typed, items);
        }
    }
    // A name being defined: nothing to offer but keywords at the start.
    if !before_word.contains('=') && !before_word.trim_start().starts_with("check") {
        if before_word.trim().is_empty() {
            let items = ["check", "network", "end"]
                .into_iter()
                .map(|k| item(k, ItemKind::Keyword, String::new()))
                .collect();
            return filtered(at(start), typed, items);
        }
        return none;
    }

    let m = &doc.engine.model;
    let own = m.cells.iter().position(|c| {
        c.role == Role::Def
            && doc
                .locate(c.name_span)
                .is_some_and(|l| l.place == super::Place::Main && doc.line_of(l.range.start) == line)
    });
    let mut items: Vec<Item> = m
        .cells
        .iter()
        .enumerate()
        .filter(|&(i, c)| c.role == Role::Def && Some(i) != own && !c.name.is_empty())
        .map(|(i, c)| item(&c.name, ItemKind::Cell, value_of(doc, display, Some(i as u32))))
        .collect();
    items.extend(funcs::library().iter().map(function_item));
    items.extend(
        NETWORK_FORMS
            .iter()
            .filter(|f| f.0.starts_with("net_"))
            .map(|f| form_item(f, ItemKind::Function)),
    );
    items.push(item("pi", ItemKind::Constant, "π = 3.14159…".into()));
    items.push(item("j", ItemKind::Constant, "the imaginary unit, √−1".into()));
    filtered(at(start), typed, items)
}

/// A cell's value as a completion shows it.
fn value_of(doc: &Document, display: Display, id: Option<u32>) -> String {
    let Some(id) = id else { return String::new() };
    let m = &doc.engine.model;
    let c = &m.cells[id as usize];
    let v = cell_vals(m, id, doc.engine.values(id), display.style, display.polar);
    if c.error.is_some() {
        v
    } else {
        let mut s = format!("= {v}");
        if s.chars().count() > 80 {
            s = s.chars().take(79).collect::<String>() + "…";
        }
        s
    }
}

fn names_items(doc: &Document, lines: Range<usize>, nodes: bool, elements: bool) -> Vec<Item> {
    let (elems, nodes_found) = network_names(doc, lines);
    let mut v = Vec::new();
    if nodes {
        v.extend(nodes_found.iter().map(|n| item(n, ItemKind::Node, "a node".into())));
    }
    if elements {
        v.extend(
            elems
                .iter()
                .map(|(n, form)| item(n, ItemKind::Element, format!("a {form} element"))),
        );
    }
    v
}

/// The items that start with what has been typed (ignoring case), sorted.
fn filtered(replace: Range<usize>, typed: &str, items: Vec<Item>) -> Completions {
    let t = typed.to_lowercase();
    let mut items: Vec<Item> = items
        .into_iter()
        .filter(|i| i.label.to_lowercase().starts_with(&t))
        .collect();
    items.sort_by(|a, b| a.label.cmp(&b.label).then((a.kind as u8).cmp(&(b.kind as u8))));
    items.dedup_by(|a, b| a.label == b.label && a.kind == b.kind);
    Completions { replace, items }
}

/// The function call whose brackets hold byte `offset`, if any.
pub fn signature(doc: &Document, offset: usize) -> Option<Signature> {
    let offset = offset.min(doc.text().len());
    let line = doc.line_of(offset);
    let range = doc.line_range(line);
    let pos = offset.clamp(range.start, range.end) - range.start;
    let code = code_part(doc.line_text(line));
    if pos > code.len() {
        return None;
    }
    let (name, _, k) = open_call(code, pos)?;
    if let Some(form) = NETWORK_FORMS.iter().find(|f| f.0 == name) {
        let label = form_label(form);
        let mut at = name.len() + 1;
        let params: Vec<Range<usize>> = form
            .1
            .iter()
            .map(|p| {
                let r = at..at + p.len();
                at += p.len() + 2;
                r
            })
            .collect();
        return Some(Signature {
            active: k.min(params.len().saturating_sub(1)),
            label,
            params,
            doc: format!("{} (see docs/networks.md)", form.2),
        });
    }
    let (_, f) = funcs::find(name)?;
    let label = func_signature(f);
    let mut params = Vec::new();
    let mut at = label.find('(')? + 1;
    for p in f.params {
        let text = format!("{}: {}", p.name, p.unit);
        let s = label[at..].find(&text)? + at;
        params.push(s..s + text.len());
        at = s + text.len();
    }
    let active = if f.variadic {
        k.min(params.len().saturating_sub(1))
    } else {
        k
    };
    let mut doc_text = format!("{}\n\nreturns {}", f.summary, f.returns);
    if !f.source.is_empty() {
        doc_text.push_str(&format!("\n\nsource: {}", f.source));
    }
    Some(Signature {
        label,
        params,
        active,
        doc: doc_text,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sheet::LoadOptions;

    fn labels(c: &Completions) -> Vec<&str> {
        c.items.iter().map(|i| i.label.as_str()).collect()
    }

    fn at(text: &str, marker: &str) -> (Document, usize) {
        let off = text.find(marker).expect("marker") + marker.len();
        (Document::open(None, text, LoadOptions::default()), off)
    }

    #[test]
    fn a_unit_run_on_to_a_number_is_completed_from_after_the_digits() {
        let text = "R = 4.7k\n";
        let (d, off) = at(text, "4.7k");
        let c = complete(&d, Display::default(), off);
        assert_eq!(&text[c.replace.clone()], "k");
        assert!(labels(&c).contains(&"kg") || labels(&c).iter().all(|l| l.starts_with('k')));
    }

    #[test]
    fn every_directive_the_engine_knows_is_offered() {
        for k in crate::engine::model::META_KEYS.iter().chain(&[
            crate::sheet::INCLUDE,
            crate::sheet::OVERRIDE,
            "amplitude",
            "note",
            "sweep",
        ]) {
            assert!(DIRECTIVES.iter().any(|(d, _)| d == k), "@{k}");
        }
    }

    #[test]
    fn an_exponent_is_not_a_unit() {
        let (d, off) = at("x = 1e3\n", "1e3");
        assert!(complete(&d, Display::default(), off).items.is_empty());
    }

    #[test]
    fn a_comment_gets_nothing() {
        let (d, off) = at("a = 2 V # see a\n", "see a");
        assert!(complete(&d, Display::default(), off).items.is_empty());
    }

    #[test]
    fn the_active_parameter_counts_commas_outside_inner_brackets() {
        let (d, off) = at("a = 2 V\nb = max(a, (1 + 2), sqrt(4)", "sqrt(4)");
        // After `sqrt(4)`: inside max, at its third argument (max repeats
        // its last parameter, so the active one is the last).
        let s = signature(&d, off).expect("inside max(");
        assert!(s.label.starts_with("max("), "{}", s.label);
        assert_eq!(s.active, s.params.len() - 1);
        // Inside sqrt's own brackets: sqrt, its first argument.
        let s = signature(&d, off - 1).expect("inside sqrt(");
        assert!(s.label.starts_with("sqrt("), "{}", s.label);
        assert_eq!(s.active, 0);
        // After a closed call, at the start of a line: none.
        assert_eq!(signature(&d, 3), None);
    }
}
