//! Renaming a cell everywhere it is written: its definition, every use,
//! `@note` and `@override` lines, in this sheet and the sheets it includes.
//! Refused, with the reason, when the new name is not a name, is reserved
//! or a function's, or is already a cell's.

use std::ops::Range;

use super::document::{Document, Located, Place};
use super::navigate::{occurrence_at, uses};
use super::symbols::SymKind;
use crate::engine::model::RESERVED;
use crate::syntax::ast::StmtKind;
use crate::syntax::parse_line;

/// Words a sheet reads as its own, never as a cell's name.
const KEYWORDS: &[&str] = &["network", "end", "at", "in", "where"];

/// The name of the cell at byte `offset` and its range in the text; or why
/// there is nothing to rename there.
pub fn prepare(doc: &Document, offset: usize) -> Result<(String, Range<usize>), String> {
    let occ = occurrence_at(doc, offset)
        .filter(|o| o.kind == SymKind::Name)
        .ok_or_else(|| "put the cursor on a cell's name to rename it".to_string())?;
    if doc.engine.model.id(&occ.name).is_none() {
        return Err(format!(
            "`{}` is not a cell of this sheet (a network's node, or a name not defined)",
            occ.name
        ));
    }
    Ok((occ.name, occ.range))
}

/// Why `new` cannot be the name of a cell of `doc` (None: it can).
pub fn refusal(doc: &Document, new: &str) -> Option<String> {
    let parsed = parse_line(&format!("{new} = 1"), crate::diag::FileId(u32::MAX), 0, 1);
    let is_name = matches!(&parsed, Ok(Some(s)) if matches!(&s.kind, StmtKind::Def(d) if d.name.name == new));
    if RESERVED.contains(&new) || KEYWORDS.contains(&new) {
        return Some(format!("`{new}` is a reserved word of sheets; choose another name"));
    }
    if !is_name {
        return Some(format!(
            "`{new}` is not a name: a name starts with a letter or `_`, followed by letters, digits or `_`"
        ));
    }
    if crate::funcs::find(new).is_some() || super::complete::NETWORK_FORMS.iter().any(|f| f.0 == new) {
        return Some(format!(
            "`{new}` is a function's name; a cell of that name would be confused with it"
        ));
    }
    let m = &doc.engine.model;
    if let Some(id) = m.id(new) {
        let c = &m.cells[id as usize];
        let file = &m.sources.get(c.file).name;
        return Some(format!("`{new}` is already a cell ({file}, line {})", c.line));
    }
    None
}

/// Every range to write `new` in, for renaming the cell at `offset`.
pub fn rename(doc: &Document, offset: usize, new: &str) -> Result<Vec<Located>, String> {
    let (old, _) = prepare(doc, offset)?;
    if old == new {
        return Ok(Vec::new());
    }
    if let Some(why) = refusal(doc, new) {
        return Err(why);
    }
    let mut v = uses(doc, &old, true);
    v.sort_by_key(|a| (place_key(&a.place), a.range.start));
    v.dedup();
    Ok(v)
}

fn place_key(p: &Place) -> String {
    match p {
        Place::Main => String::new(),
        Place::File(f) => f.display().to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sheet::LoadOptions;

    fn doc(t: &str) -> Document {
        Document::open(None, t, LoadOptions::default())
    }

    #[test]
    fn a_cell_is_renamed_where_it_is_defined_and_used_and_nowhere_else() {
        let t = "R = 3 Ω # R of the run\nRb = R * 2\nP = R + Rb\n@note R \"measured\"\n";
        let d = doc(t);
        let at = t.find("R +").unwrap();
        let v = rename(&d, at, "Rline").unwrap();
        let places: Vec<&str> = v.iter().map(|l| &t[l.range.clone()]).collect();
        assert_eq!(places, vec!["R"; 4]);
        // Not the R in the comment, not Rb.
        let starts: Vec<usize> = v.iter().map(|l| l.range.start).collect();
        assert_eq!(starts, vec![0, t.find("R * 2").unwrap(), at, t.find("R \"").unwrap()]);
    }

    #[test]
    fn a_clash_a_reserved_word_a_function_or_a_non_name_is_refused() {
        let d = doc("R = 3 Ω\nX = 4 Ω\nZ = R + j*X\n");
        let at = 0;
        assert!(rename(&d, at, "X").unwrap_err().contains("already a cell"));
        assert!(rename(&d, at, "j").unwrap_err().contains("reserved"));
        assert!(rename(&d, at, "pi").unwrap_err().contains("reserved"));
        assert!(rename(&d, at, "sqrt").unwrap_err().contains("function"));
        assert!(rename(&d, at, "2R").unwrap_err().contains("not a name"));
        assert!(rename(&d, at, "R b").unwrap_err().contains("not a name"));
        assert!(rename(&d, at, "").unwrap_err().contains("not a name"));
        // On a unit or a function: nothing to rename.
        assert!(prepare(&d, 5).is_err());
        // Greek and underscores are names.
        assert_eq!(rename(&d, at, "R_ω").unwrap().len(), 2);
    }
}
