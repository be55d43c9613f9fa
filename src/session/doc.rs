//! The sheet as the user's text: every line kept as written (comments,
//! blank lines, order), with the statement parsed from it. A session edits
//! this document line by line, and saving writes its text back: a changed
//! definition replaces its own line, a new one is appended, a removed one
//! goes, and every other line stays exactly as it was.

use crate::diag::{Diagnostic, FileId, SourceMap};
use crate::sheet::{Sheet, SheetFile};
use crate::syntax::ast::{Stmt, StmtKind};
use crate::syntax::parser::find_comment_start;

#[derive(Clone, Debug)]
pub struct DocLine {
    pub text: String,
    /// The statement on this line (none for a blank or comment line, or a
    /// line that does not parse).
    pub stmt: Option<Stmt>,
    /// Why the line does not parse.
    pub error: Option<Diagnostic>,
    /// For an `@include` line: the statements of the library sheet (and of
    /// the sheets it includes), which take this line's place in the order.
    pub included: Vec<Stmt>,
    /// How this line ended in the file (`Some(true)`: `\r\n`); `None` for
    /// a line the session added, which ends as the document's lines do.
    pub cr: Option<bool>,
}

impl DocLine {
    /// The cell this line defines.
    pub fn defines(&self) -> Option<&str> {
        match &self.stmt.as_ref()?.kind {
            StmtKind::Def(d) => Some(&d.name.name),
            _ => None,
        }
    }
    /// The directive this line states (`title` for `@title "…"`).
    pub fn directive(&self) -> Option<&str> {
        match &self.stmt.as_ref()?.kind {
            StmtKind::Directive(d) => Some(&d.name.name),
            _ => None,
        }
    }
}

#[derive(Clone, Debug)]
pub struct Doc {
    pub lines: Vec<DocLine>,
    /// Lines end in `\r\n`.
    pub crlf: bool,
    /// The last line ended with a line break (a file without one is saved
    /// without one).
    pub final_newline: bool,
    /// The file began with a UTF-8 byte-order mark (kept on saving).
    pub bom: bool,
    /// The file the original text was read from (spans of unchanged lines
    /// point into it).
    pub main: FileId,
    /// The main file and the library sheets it includes.
    pub files: Vec<SheetFile>,
    /// Problems found in included files (they stay until the sheet is
    /// opened again).
    pub included_errors: Vec<Diagnostic>,
    /// Library values this sheet's `@override` lines replace.
    pub overrides: Vec<crate::sheet::Override>,
}

impl Doc {
    /// The document of a loaded sheet: its text split into lines, each
    /// with its statement or parse error.
    pub fn from_sheet(sheet: &Sheet) -> Doc {
        let text = &sheet.sources.get(sheet.main).text;
        let crlf = text.contains("\r\n");
        let mut raw: Vec<&str> = text.split('\n').collect();
        // A final newline ends the last line; it does not start a new one.
        let final_newline = text.is_empty() || text.ends_with('\n');
        if raw.len() > 1 && raw.last() == Some(&"") {
            raw.pop();
        }
        let last = raw.len().saturating_sub(1);
        if raw == [""] {
            raw.clear();
        }
        let mut lines: Vec<DocLine> = raw
            .iter()
            .enumerate()
            .map(|(i, l)| DocLine {
                text: l.strip_suffix('\r').unwrap_or(l).to_string(),
                stmt: None,
                error: None,
                included: Vec::new(),
                // The last line of a file without a final newline has no
                // ending of its own.
                cr: (i < last || final_newline).then(|| l.ends_with('\r')),
            })
            .collect();
        // The line of the main file whose `@include` brought `file` in.
        let include_line = |file: FileId| -> Option<usize> {
            let mut f = file;
            for _ in 0..=crate::sheet::MAX_INCLUDE_DEPTH {
                let at = sheet.files.iter().find(|x| x.id == f)?.included_at?;
                if at.file == sheet.main {
                    return Some(sheet.sources.line_of(at));
                }
                f = at.file;
            }
            None
        };
        let mut included_errors = Vec::new();
        for s in &sheet.stmts {
            let n = if s.span.file == sheet.main {
                Some(s.line as usize)
            } else {
                include_line(s.span.file)
            };
            match n.and_then(|n| lines.get_mut(n - 1)) {
                Some(l) if s.span.file == sheet.main => l.stmt = Some(s.clone()),
                Some(l) => l.included.push(s.clone()),
                None => {}
            }
        }
        for e in &sheet.errors {
            match e.span {
                Some(sp) if sp.file == sheet.main => {
                    let n = sheet.sources.line_of(sp);
                    if let Some(l) = lines.get_mut(n - 1) {
                        l.error = Some(e.clone());
                    }
                }
                _ => included_errors.push(e.clone()),
            }
        }
        Doc {
            lines,
            crlf,
            final_newline,
            bom: false,
            main: sheet.main,
            files: sheet.files.clone(),
            included_errors,
            overrides: sheet
                .overrides
                .iter()
                .filter(|o| o.library.is_some())
                .cloned()
                .collect(),
        }
    }

    /// The line that defines cell `name`.
    pub fn find_def(&self, name: &str) -> Option<usize> {
        self.lines.iter().position(|l| l.defines() == Some(name))
    }

    pub fn find_directive(&self, name: &str) -> Option<usize> {
        self.lines.iter().position(|l| l.directive() == Some(name))
    }

    /// The text that replaces line `idx` when the user types `typed` for
    /// it, in the sheet's own layout: a definition of the same name keeps
    /// the old line's text up to its formula (indent, the spaces that align
    /// its `=`), and a comment — the old one when none was typed — stays in
    /// its column (pushed two spaces past a new formula that reaches it).
    pub fn merged_text(&self, idx: usize, typed: &str) -> String {
        let typed = typed.trim();
        let old = &self.lines[idx].text;
        let old_comment = find_comment_start(old);
        let old_body = &old[..old_comment.unwrap_or(old.len())];
        let (typed_body, typed_comment) = match find_comment_start(typed) {
            Some(c) => (typed[..c].trim_end(), Some(&typed[c..])),
            None => (typed, None),
        };
        // An `@override NAME = …` line keeps its keyword.
        let bare_lhs = |l: &'_ str| -> String {
            let t = l.trim_start();
            let t = t
                .strip_prefix('@')
                .and_then(|r| r.strip_prefix(crate::sheet::OVERRIDE))
                .unwrap_or(t);
            t.to_string()
        };
        let body = match (self.lines[idx].defines(), def_split(old_body), def_split(typed_body)) {
            (Some(_), Some((old_lhs, old_formula)), Some((lhs, formula))) if same_words(lhs, &bare_lhs(old_lhs)) => {
                let lead = old_formula.len() - old_formula.trim_start().len();
                let keep = old_lhs.len() + 1 + lead;
                format!("{}{}", &old_body[..keep], formula.trim())
            }
            _ => typed_body.to_string(),
        };
        let comment = typed_comment.or(old_comment.map(|c| &old[c..]));
        let Some(comment) = comment else {
            return body;
        };
        let gap = match old_comment {
            Some(c) => {
                let before = &old[..c];
                let col = before.chars().count();
                let len = body.chars().count();
                if len < col {
                    " ".repeat(col - len)
                } else if let Some(tc) = typed_comment {
                    // Past the column: the spacing typed before the comment.
                    typed[typed_body.len()..typed.len() - tc.len()].to_string()
                } else {
                    "  ".to_string()
                }
            }
            // A comment typed on a line that had none: as typed.
            None => typed[typed_body.len()..typed.len() - comment.len()].to_string(),
        };
        format!("{body}{gap}{comment}")
    }

    /// The sheet the compiler sees: every statement in document order,
    /// a library sheet's where it is included.
    pub fn sheet(&self, sources: &SourceMap) -> Sheet {
        let mut stmts = Vec::with_capacity(self.lines.len());
        for l in &self.lines {
            stmts.extend(l.stmt.iter().cloned());
            stmts.extend(l.included.iter().cloned());
        }
        let mut errors: Vec<Diagnostic> = self.lines.iter().filter_map(|l| l.error.clone()).collect();
        errors.extend(self.included_errors.iter().cloned());
        Sheet {
            sources: sources.clone(),
            main: self.main,
            stmts,
            errors,
            files: self.files.clone(),
            overrides: self.overrides.clone(),
        }
    }

    /// The document as text, each line with the ending it came with (an
    /// added line with the document's usual one), a final newline only if
    /// the file had one, and its byte-order mark: an unchanged document
    /// gives back the file's bytes.
    pub fn text(&self) -> String {
        let mut out = String::new();
        if self.bom {
            out.push('\u{FEFF}');
        }
        let n = self.lines.len();
        for (i, l) in self.lines.iter().enumerate() {
            out.push_str(&l.text);
            if i + 1 == n && !self.final_newline && l.cr.is_none() {
                // The file's last line had no ending; a line the session
                // appended after it gets one below, this one does not.
                break;
            }
            let cr = l.cr.unwrap_or(self.crlf);
            out.push_str(if cr { "\r\n" } else { "\n" });
        }
        out
    }
}

/// A definition's text cut at its `=`: the name side and the formula
/// side. `None` when there is no `=` standing alone before any quote.
fn def_split(body: &str) -> Option<(&str, &str)> {
    let b = body.as_bytes();
    for (i, &c) in b.iter().enumerate() {
        match c {
            b'"' => return None,
            b'=' => {
                let prev = i.checked_sub(1).map(|p| b[p]);
                let next = b.get(i + 1).copied();
                if matches!(prev, Some(b'<' | b'>' | b'!' | b'~' | b'=')) || next == Some(b'=') {
                    return None;
                }
                return Some((&body[..i], &body[i + 1..]));
            }
            _ => {}
        }
    }
    None
}

/// Two name sides alike but for spacing (`Vs   ` and `Vs`).
fn same_words(a: &str, b: &str) -> bool {
    a.split_whitespace().eq(b.split_whitespace())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diag::SourceFile;
    use crate::syntax::parse_line;

    const SITE: &str = "# Feeder 7 check (invented)\n\
@title \"Feeder 7\"\n\
\n\
Vs = 480 V        # bus voltage\n\
Zs = (0.2 + j1.1) Ω\n\
\n\
# the load\n\
Zl = 12 Ω\n\
I = Vs / (Zs + Zl)\n";

    fn doc(text: &str) -> (Doc, SourceMap) {
        let s = Sheet::from_text("site.ohm", text);
        (Doc::from_sheet(&s), s.sources)
    }

    fn line(src: &mut SourceMap, text: &str) -> DocLine {
        let f = src.add(SourceFile::new("input", None, text.to_string()));
        DocLine {
            text: text.to_string(),
            stmt: parse_line(text, f, 0, 1).unwrap(),
            error: None,
            included: Vec::new(),
            cr: None,
        }
    }

    #[test]
    fn unchanged_text_is_written_back_byte_for_byte() {
        let (d, _) = doc(SITE);
        assert_eq!(d.text(), SITE);
        let crlf = SITE.replace('\n', "\r\n");
        assert_eq!(doc(&crlf).0.text(), crlf);
    }

    #[test]
    fn lines_know_what_they_define() {
        let (d, _) = doc(SITE);
        assert_eq!(d.find_def("Zl"), Some(7));
        assert_eq!(d.find_def("I"), Some(8));
        assert_eq!(d.find_directive("title"), Some(1));
        assert_eq!(d.find_def("nope"), None);
    }

    #[test]
    fn a_replaced_definition_keeps_its_comment_and_place() {
        let (mut d, mut src) = doc(SITE);
        let idx = d.find_def("Vs").unwrap();
        let merged = d.merged_text(idx, "Vs = 415 V");
        assert_eq!(merged, "Vs = 415 V        # bus voltage");
        d.lines[idx] = line(&mut src, &merged);
        // a comment typed with the new formula wins
        let idx2 = d.find_def("Zl").unwrap();
        let m2 = d.merged_text(idx2, "Zl = 10 Ω # measured");
        d.lines[idx2] = line(&mut src, &m2);
        d.lines.push(line(&mut src, "P = re(Vs * conj(I))"));
        assert_eq!(
            d.text(),
            "# Feeder 7 check (invented)\n@title \"Feeder 7\"\n\nVs = 415 V        # bus voltage\nZs = (0.2 + j1.1) Ω\n\n# the load\nZl = 10 Ω # measured\nI = Vs / (Zs + Zl)\nP = re(Vs * conj(I))\n"
        );
    }

    #[test]
    fn a_removed_line_goes_and_the_rest_stay() {
        let (mut d, _) = doc(SITE);
        let idx = d.find_def("Zs").unwrap();
        d.lines.remove(idx);
        assert!(!d.text().contains("Zs ="));
        assert!(d.text().contains("# bus voltage"));
        assert_eq!(d.text().lines().count(), SITE.lines().count() - 1);
    }

    #[test]
    fn no_final_newline_stays_so_and_empty_stays_empty() {
        assert_eq!(doc("a = 1").0.text(), "a = 1");
        assert_eq!(doc("a = 1\r\nb = 2").0.text(), "a = 1\r\nb = 2");
        // Mixed endings: each line keeps its own.
        assert_eq!(doc("a = 1\r\nb = 2\nc = 3\r\n").0.text(), "a = 1\r\nb = 2\nc = 3\r\n");
        assert_eq!(doc("").0.text(), "");
        assert_eq!(doc("").0.lines.len(), 0);
        assert_eq!(doc("\n\n").0.text(), "\n\n");
    }

    #[test]
    fn a_line_that_does_not_parse_is_kept_with_its_error() {
        let (d, src) = doc("a = 1\nb = (2 +\nc = a\n");
        assert!(d.lines[1].error.is_some());
        assert_eq!(d.text(), "a = 1\nb = (2 +\nc = a\n");
        let sheet = d.sheet(&src);
        assert_eq!(sheet.stmts.len(), 2);
        assert_eq!(sheet.errors.len(), 1);
    }
}
