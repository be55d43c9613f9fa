//! The outline of a sheet: sections by comment headings (`# --- Loads ---`,
//! `## Loads`), and in them the cells and checks; a network block is a
//! container of its elements. Values are shown as the hints show them.

use std::ops::Range;

use super::document::Document;
use super::symbols::parse_at;
use super::values::cell_vals;
use super::Display;
use crate::syntax::ast::StmtKind;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OutlineKind {
    Section,
    Cell,
    Check,
    Network,
    Element,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Symbol {
    pub name: String,
    pub detail: String,
    pub kind: OutlineKind,
    /// The whole extent (a section: from its heading to the next).
    pub range: Range<usize>,
    /// What to select (a cell's name; a heading's line).
    pub selection: Range<usize>,
    pub children: Vec<Symbol>,
}

/// The title of a comment heading: `# --- Loads ---`, `# === Loads`,
/// `## Loads`; None for any other line.
pub fn heading(line: &str) -> Option<String> {
    let t = line.trim();
    let body = t.strip_prefix('#')?;
    let (marked, rest) = if let Some(r) = body.strip_prefix('#') {
        (true, r.trim_start_matches('#'))
    } else {
        let r = body.trim_start();
        let lead = r.chars().take_while(|c| matches!(c, '-' | '=' | '*' | '─')).count();
        (lead >= 2, r.trim_start_matches(['-', '=', '*', '─']))
    };
    if !marked {
        return None;
    }
    let title = rest.trim().trim_end_matches(['-', '=', '*', '─', '#']).trim();
    (!title.is_empty()).then(|| title.to_string())
}

pub fn outline(doc: &Document, display: Display) -> Vec<Symbol> {
    let m = &doc.engine.model;
    let mut top: Vec<Symbol> = Vec::new();
    // The open section and the open network (indices into their parents).
    let mut section: Option<Symbol> = None;
    let mut network: Option<Symbol> = None;
    let value = |name: &str| {
        m.id(name).map_or(String::new(), |id| {
            let v = cell_vals(m, id, doc.engine.values(id), display.style, display.polar);
            if m.cells[id as usize].error.is_some() {
                v
            } else {
                format!("= {v}")
            }
        })
    };
    fn place(sym: Symbol, network: &mut Option<Symbol>, section: &mut Option<Symbol>, top: &mut Vec<Symbol>) {
        if let Some(n) = network.as_mut() {
            n.range.end = sym.range.end;
            n.children.push(sym);
        } else if let Some(s) = section.as_mut() {
            s.range.end = sym.range.end;
            s.children.push(sym);
        } else {
            top.push(sym);
        }
    }
    let mut checks = doc
        .engine
        .model
        .cells
        .iter()
        .enumerate()
        .filter(|(_, c)| c.is_check())
        .filter_map(|(i, c)| {
            let l = doc.locate(c.stmt_span)?;
            (l.place == super::Place::Main).then(|| (doc.line_of(l.range.start), i as u32))
        })
        .collect::<Vec<_>>();
    checks.sort();
    for i in 0..doc.line_count() {
        let lr = doc.line_range(i);
        let text = doc.line_text(i);
        if let Some(title) = heading(text) {
            if let Some(n) = network.take() {
                place(n, &mut None, &mut section, &mut top);
            }
            if let Some(s) = section.take() {
                top.push(s);
            }
            section = Some(Symbol {
                name: title,
                detail: String::new(),
                kind: OutlineKind::Section,
                range: lr.clone(),
                selection: lr,
                children: Vec::new(),
            });
            continue;
        }
        let Some(st) = parse_at(text, lr.start, (i + 1) as u32) else {
            continue;
        };
        let whole = st.span.start as usize..st.span.end as usize;
        match &st.kind {
            StmtKind::Def(d) => {
                let name_r = d.name.span.start as usize..d.name.span.end as usize;
                let kind = if network.is_some() {
                    OutlineKind::Element
                } else {
                    OutlineKind::Cell
                };
                let sym = Symbol {
                    name: d.name.name.clone(),
                    detail: value(&d.name.name),
                    kind,
                    range: whole,
                    selection: name_r,
                    children: Vec::new(),
                };
                place(sym, &mut network, &mut section, &mut top);
            }
            StmtKind::Check(_) => {
                let detail = checks
                    .iter()
                    .find(|(l, _)| *l == i)
                    .map(|&(_, id)| cell_vals(m, id, doc.engine.values(id), display.style, display.polar))
                    .unwrap_or_default();
                let sym = Symbol {
                    name: doc.text()[whole.clone()].trim().to_string(),
                    detail,
                    kind: OutlineKind::Check,
                    range: whole.clone(),
                    selection: whole,
                    children: Vec::new(),
                };
                place(sym, &mut network, &mut section, &mut top);
            }
            StmtKind::Network(h) => {
                if let Some(n) = network.take() {
                    place(n, &mut None, &mut section, &mut top);
                }
                network = Some(Symbol {
                    name: h.name.name.clone(),
                    detail: "network".into(),
                    kind: OutlineKind::Network,
                    range: whole,
                    selection: h.name.span.start as usize..h.name.span.end as usize,
                    children: Vec::new(),
                });
            }
            StmtKind::End => {
                if let Some(mut n) = network.take() {
                    n.range.end = lr.end;
                    place(n, &mut None, &mut section, &mut top);
                }
            }
            StmtKind::Directive(_) | StmtKind::Expr(_) => {}
        }
    }
    if let Some(n) = network.take() {
        place(n, &mut None, &mut section, &mut top);
    }
    if let Some(s) = section.take() {
        top.push(s);
    }
    top
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sheet::LoadOptions;

    #[test]
    fn headings_are_marked_comments_only() {
        assert_eq!(
            heading("# --- system data (invented) ---").as_deref(),
            Some("system data (invented)")
        );
        assert_eq!(heading("## Loads").as_deref(), Some("Loads"));
        assert_eq!(heading("# === Faults ===").as_deref(), Some("Faults"));
        assert_eq!(heading("# a plain remark"), None);
        assert_eq!(heading("# -5 V is the floor"), None);
        assert_eq!(heading("# ---"), None);
        assert_eq!(heading("R = 2 Ω # --- no ---"), None);
    }

    #[test]
    fn sections_hold_cells_checks_and_networks_hold_elements() {
        let t = "a = 1 V\n# --- loads ---\nR = 2 Ω\ncheck R ~= 2 Ω +- 1%\nnetwork n at 50 Hz\n  E = emf(x, ground, a)\n  B = branch(x, ground, R)\nend\n## after\nI = net_i(n, B)\n";
        let d = Document::open(None, t, LoadOptions::default());
        let o = outline(&d, Display::default());
        let names: Vec<(&str, OutlineKind)> = o.iter().map(|s| (s.name.as_str(), s.kind)).collect();
        assert_eq!(
            names,
            vec![
                ("a", OutlineKind::Cell),
                ("loads", OutlineKind::Section),
                ("after", OutlineKind::Section)
            ]
        );
        let loads: Vec<(&str, OutlineKind)> = o[1].children.iter().map(|s| (s.name.as_str(), s.kind)).collect();
        assert_eq!(
            loads,
            vec![
                ("R", OutlineKind::Cell),
                ("check R ~= 2 Ω +- 1%", OutlineKind::Check),
                ("n", OutlineKind::Network)
            ]
        );
        let elems: Vec<&str> = o[1].children[2].children.iter().map(|s| s.name.as_str()).collect();
        assert_eq!(elems, vec!["E", "B"]);
        assert_eq!(o[0].detail, "= 1 V");
        assert!(
            o[1].children[1].detail.starts_with("holds"),
            "{}",
            o[1].children[1].detail
        );
        // The network reaches to its `end`; the section to its last item.
        assert_eq!(&t[o[1].children[2].range.clone()].lines().last(), &Some("end"));
        assert_eq!(&t[o[1].selection.clone()], "# --- loads ---");
    }
}
