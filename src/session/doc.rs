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
    /// The file the original text was read from (spans of unchanged lines
    /// point into it).
    pub main: FileId,
    /// The main file and the library sheets it includes.
    pub files: Vec<SheetFile>,
    /// Problems found in included files (they stay until the sheet is
    /// opened again).
    pub included_errors: Vec<Diagnostic>,
}

impl Doc {
    /// The document of a loaded sheet: its text split into lines, each
    /// with its statement or parse error.
    pub fn from_sheet(sheet: &Sheet) -> Doc {
        let text = &sheet.sources.get(sheet.main).text;
        let crlf = text.contains("\r\n");
        let mut raw: Vec<&str> = text.split('\n').collect();
        // A final newline ends the last line; it does not start a new one.
        if raw.len() > 1 && raw.last() == Some(&"") {
            raw.pop();
        }
        if raw == [""] {
            raw.clear();
        }
        let mut lines: Vec<DocLine> = raw
            .iter()
            .map(|l| DocLine {
                text: l.strip_suffix('\r').unwrap_or(l).to_string(),
                stmt: None,
                error: None,
                included: Vec::new(),
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
            main: sheet.main,
            files: sheet.files.clone(),
            included_errors,
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
    /// it: what was typed, keeping the old line's trailing comment (and
    /// the spacing before it) when the new text has no comment of its own.
    pub fn merged_text(&self, idx: usize, typed: &str) -> String {
        let typed = typed.trim();
        if find_comment_start(typed).is_some() {
            return typed.to_string();
        }
        let old = &self.lines[idx].text;
        match find_comment_start(old) {
            Some(c) => {
                let before = &old[..c];
                let gap = &before[before.trim_end().len()..];
                let gap = if gap.is_empty() { "  " } else { gap };
                format!("{typed}{gap}{}", &old[c..])
            }
            None => typed.to_string(),
        }
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
        }
    }

    /// The document as text, with the line endings it came with and a
    /// final newline.
    pub fn text(&self) -> String {
        let eol = if self.crlf { "\r\n" } else { "\n" };
        let mut out = String::new();
        for l in &self.lines {
            out.push_str(&l.text);
            out.push_str(eol);
        }
        out
    }
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
    fn no_final_newline_gets_one_and_empty_stays_empty() {
        assert_eq!(doc("a = 1").0.text(), "a = 1\n");
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
