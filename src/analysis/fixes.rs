//! Repairs the diagnostics already suggest, as edits: each diagnostic of
//! the model that carries a machine-applicable fix (`diag::Fix`: a did-you-
//! mean name, unit, function or field, `4.7K` → `4.7k`, `6 + j10 Ω` →
//! `(6 + j10) Ω`, `**` → `^`) becomes a replacement in the current text.
//! Nothing is derived here that the diagnostic did not say.

use super::document::{Document, Located};

#[derive(Clone, Debug, PartialEq)]
pub struct Repair {
    /// What the editor shows: "Write `kVA` for `KVA`".
    pub title: String,
    /// The error code's name of the diagnostic it repairs.
    pub code: &'static str,
    /// Where that diagnostic is.
    pub at: Located,
    /// The text to replace, and what with.
    pub edit: Located,
    pub text: String,
}

/// The text a located range holds.
fn text_at<'a>(doc: &'a Document, l: &Located) -> &'a str {
    let text = match &l.place {
        super::Place::Main => doc.text(),
        super::Place::File(p) => doc.file_text(p).unwrap_or(""),
    };
    text.get(l.range.clone()).unwrap_or("")
}

/// Every repair the current problems of `doc` offer.
pub fn repairs(doc: &Document) -> Vec<Repair> {
    let mut out: Vec<Repair> = Vec::new();
    for d in &doc.engine.model.diagnostics {
        let Some(fix) = &d.fix else { continue };
        let (Some(at), Some(edit)) = (doc.locate_diag(d), doc.locate(fix.span)) else {
            continue;
        };
        let old = text_at(doc, &edit);
        if old == fix.text {
            continue;
        }
        let r = Repair {
            title: format!("Write `{}` for `{old}`", fix.text),
            code: d.code.name(),
            at,
            edit,
            text: fix.text.clone(),
        };
        if !out.contains(&r) {
            out.push(r);
        }
    }
    // In the order of the text (the model lists syntax errors first).
    out.sort_by_key(|r| (r.at.place != super::Place::Main, r.at.range.start));
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sheet::LoadOptions;

    fn fixed(text: &str) -> Vec<(String, String)> {
        let d = Document::open(None, text, LoadOptions::default());
        repairs(&d)
            .into_iter()
            .map(|r| {
                let mut t = text.to_string();
                t.replace_range(r.edit.range.clone(), &r.text);
                (r.code.to_string(), t)
            })
            .collect()
    }

    #[test]
    fn each_suggested_repair_gives_the_text_the_hint_shows() {
        // Each line alone, so each error is the only one.
        let cases = [
            ("R = 4.7K\n", "unknown-unit", "R = 4.7k\n"),
            ("S = 1500 KVA\n", "unknown-unit", "S = 1500 kVA\n"),
            ("V = 2 KV\n", "unknown-unit", "V = 2 kV\n"),
            ("Z = 6 + j10 Ω\n", "dimension-mismatch", "Z = (6 + j10) Ω\n"),
            ("p = 2 ** 3\n", "syntax", "p = 2 ^ 3\n"),
            ("X = 4 Ω\nY = XX + 1 Ω\n", "unknown-name", "X = 4 Ω\nY = X + 1 Ω\n"),
            ("y = sqrtt(4)\n", "unknown-function", "y = sqrt(4)\n"),
        ];
        for (text, code, want) in cases {
            let got = fixed(text);
            assert_eq!(got, vec![(code.to_string(), want.to_string())], "{text}");
            // The repaired text has no errors left.
            let d = Document::open(None, want, LoadOptions::default());
            assert!(!d.engine.model.has_errors(), "{want}");
        }
    }

    #[test]
    fn a_hint_without_one_clear_repair_offers_none() {
        // Kelvin or kilo cannot be told apart after a space: no repair.
        assert_eq!(fixed("T = 4 K\n"), vec![]);
        // No name near enough: no repair.
        assert_eq!(fixed("X = 4 Ω\nY = qqqqqq + 1 Ω\n"), vec![]);
    }
}
