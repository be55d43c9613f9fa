//! Going to where a cell is defined (also in an included sheet), to the
//! sheet an `@include` line names, and finding every use of a name across
//! the sheet and the sheets it includes.

use super::document::{Document, Located, Place};
use super::symbols::{self, Occurrence, SymKind};

/// What is at byte `offset` of the document.
pub fn occurrence_at(doc: &Document, offset: usize) -> Option<Occurrence> {
    let line = doc.line_of(offset);
    let lr = doc.line_range(line);
    symbols::at(doc.text(), lr.start, doc.line_text(line), (line + 1) as u32, offset)
}

/// Where the thing at `offset` is defined: a cell's definition (its name),
/// or for an `@include` line the start of the sheet it names.
pub fn definition(doc: &Document, offset: usize) -> Option<Located> {
    let line = doc.line_of(offset);
    if let Some(l) = included_by_line(doc, line) {
        return Some(l);
    }
    let occ = occurrence_at(doc, offset)?;
    match occ.kind {
        SymKind::Name => {
            let m = &doc.engine.model;
            let id = m.id(&occ.name)?;
            doc.locate(m.cells[id as usize].name_span)
        }
        SymKind::SearchVar => Some(Located {
            place: Place::Main,
            range: occ.range,
        }),
        _ => None,
    }
}

/// The sheet an `@include` on line `line` brought in.
fn included_by_line(doc: &Document, line: usize) -> Option<Located> {
    let f = doc.files.iter().skip(1).find(|f| {
        f.included_at
            .and_then(|s| doc.locate(s))
            .is_some_and(|l| l.place == Place::Main && doc.line_of(l.range.start) == line)
    })?;
    Some(Located {
        place: Place::File(f.canonical.clone()?),
        range: 0..0,
    })
}

/// Every place the name at `offset` is written: in this sheet and in the
/// sheets it includes (with its definition when `declaration`).
pub fn references(doc: &Document, offset: usize, declaration: bool) -> Vec<Located> {
    let Some(occ) = occurrence_at(doc, offset) else {
        return Vec::new();
    };
    if occ.kind != SymKind::Name {
        return Vec::new();
    }
    uses(doc, &occ.name, declaration)
}

/// Every place `name` is written as a name.
pub fn uses(doc: &Document, name: &str, declaration: bool) -> Vec<Located> {
    let keep = |o: &Occurrence| o.kind == SymKind::Name && o.name == name && (declaration || !o.defines);
    let mut out: Vec<Located> = symbols::of_text(doc.text())
        .into_iter()
        .filter(keep)
        .map(|o| Located {
            place: Place::Main,
            range: o.range,
        })
        .collect();
    for f in doc.files.iter().skip(1) {
        let Some(canonical) = &f.canonical else { continue };
        let text = &doc.engine.model.sources.get(f.id).text;
        out.extend(symbols::of_text(text).into_iter().filter(keep).map(|o| Located {
            place: Place::File(canonical.clone()),
            range: o.range,
        }));
    }
    out
}
