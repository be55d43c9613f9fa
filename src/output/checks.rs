//! `check`'s results for machines: JSON, and JUnit XML (the test-report
//! format CI systems read natively: `testsuites` / `testsuite` per sheet /
//! `testcase` per check, with `failure` for a failed check and `error` for
//! a sheet that could not be evaluated).

use serde::Serialize;

use super::CheckRow;

/// One sheet run by `check`.
#[derive(Clone, Debug, Serialize)]
pub struct SheetChecks {
    /// The sheet as named on the command line or found in a folder.
    pub sheet: String,
    /// Why the sheet could not be evaluated, as the messages on stderr
    /// read; `None` when it was.
    pub error: Option<String>,
    pub checks: Vec<CheckRow>,
}

/// Counts over every sheet.
#[derive(Clone, Copy, Debug, Default, Serialize, PartialEq, Eq)]
pub struct Totals {
    pub sheets: usize,
    pub checks: usize,
    pub passed: usize,
    pub failed: usize,
    /// Sheets that could not be evaluated, and paths that named no sheet.
    pub errors: usize,
    pub without_checks: usize,
}

impl Totals {
    pub fn of(sheets: &[SheetChecks], problems: usize) -> Totals {
        let mut t = Totals {
            sheets: sheets.len(),
            errors: problems,
            ..Totals::default()
        };
        for s in sheets {
            t.checks += s.checks.len();
            t.passed += s.checks.iter().filter(|c| c.passed).count();
            t.failed += s.checks.iter().filter(|c| !c.passed).count();
            t.errors += usize::from(s.error.is_some());
            t.without_checks += usize::from(s.checks.is_empty() && s.error.is_none());
        }
        t
    }
}

#[derive(Serialize)]
struct JsonCheck<'a> {
    /// The file the check is written in (a library sheet for an included check).
    file: &'a str,
    line: u32,
    check: &'a str,
    verdict: &'static str,
    computed: super::Complex,
    expected: super::Complex,
    /// |computed − expected| and the allowance, in coherent SI units of `unit`.
    #[serde(serialize_with = "super::finite_or_null")]
    difference: f64,
    #[serde(serialize_with = "super::finite_or_null")]
    allowance: f64,
    unit: &'a str,
    computed_display: &'a str,
    expected_display: &'a str,
    difference_display: &'a str,
    allowance_display: &'a str,
    /// For a check over the tolerances: its verdict there in words.
    #[serde(skip_serializing_if = "Option::is_none")]
    over: Option<&'a str>,
}

#[derive(Serialize)]
struct JsonSheet<'a> {
    sheet: &'a str,
    status: &'static str,
    error: Option<&'a str>,
    checks: Vec<JsonCheck<'a>>,
}

#[derive(Serialize)]
struct JsonDoc<'a> {
    totals: Totals,
    /// Paths on the command line that named no sheet.
    problems: &'a [String],
    sheets: Vec<JsonSheet<'a>>,
}

fn verdict(c: &CheckRow) -> &'static str {
    if c.passed {
        "pass"
    } else {
        "fail"
    }
}

/// The whole run as one JSON document.
pub fn to_json(sheets: &[SheetChecks], problems: &[String]) -> String {
    let doc = JsonDoc {
        totals: Totals::of(sheets, problems.len()),
        problems,
        sheets: sheets
            .iter()
            .map(|s| JsonSheet {
                sheet: &s.sheet,
                status: match (&s.error, s.checks.iter().all(|c| c.passed), s.checks.is_empty()) {
                    (Some(_), _, _) => "error",
                    (None, _, true) => "no checks",
                    (None, true, false) => "pass",
                    (None, false, false) => "fail",
                },
                error: s.error.as_deref(),
                checks: s
                    .checks
                    .iter()
                    .map(|c| JsonCheck {
                        file: &c.file,
                        line: c.line,
                        check: &c.expr,
                        verdict: verdict(c),
                        computed: c.lhs,
                        expected: c.rhs,
                        difference: c.error,
                        allowance: c.tolerance,
                        unit: &c.unit,
                        computed_display: &c.lhs_display,
                        expected_display: &c.rhs_display,
                        difference_display: &c.error_display,
                        allowance_display: &c.tolerance_display,
                        over: c.over.as_deref(),
                    })
                    .collect(),
            })
            .collect(),
    };
    serde_json::to_string_pretty(&doc).unwrap_or_default()
}

/// Text escaped for an XML attribute or element; characters XML 1.0 does
/// not allow (control characters but tab and line ends) are dropped.
fn xml(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(ch),
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => {}
            c => out.push(c),
        }
    }
    out
}

/// The whole run as JUnit XML: one `testsuite` per sheet, one `testcase`
/// per check (`classname` the sheet, `name` the check with its line);
/// a failed check has a `failure` with the computed value, the difference
/// and the allowance; a sheet that could not be evaluated has one
/// `testcase` with an `error`.
pub fn to_junit(sheets: &[SheetChecks], problems: &[String]) -> String {
    let t = Totals::of(sheets, problems.len());
    let mut out = String::from("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    out.push_str(&format!(
        "<testsuites name=\"ohmsheet check\" tests=\"{}\" failures=\"{}\" errors=\"{}\">\n",
        t.checks + t.errors,
        t.failed,
        t.errors
    ));
    for p in problems {
        out.push_str("  <testsuite name=\"(command line)\" tests=\"1\" failures=\"0\" errors=\"1\">\n");
        out.push_str(&format!(
            "    <testcase classname=\"(command line)\" name=\"{}\">\n      <error message=\"{}\"/>\n    </testcase>\n",
            xml(p),
            xml(p)
        ));
        out.push_str("  </testsuite>\n");
    }
    for s in sheets {
        let failures = s.checks.iter().filter(|c| !c.passed).count();
        let errors = usize::from(s.error.is_some());
        out.push_str(&format!(
            "  <testsuite name=\"{}\" tests=\"{}\" failures=\"{failures}\" errors=\"{errors}\">\n",
            xml(&s.sheet),
            s.checks.len() + errors
        ));
        if let Some(e) = &s.error {
            let first = e.lines().next().unwrap_or("the sheet could not be evaluated");
            out.push_str(&format!(
                "    <testcase classname=\"{}\" name=\"(sheet)\" file=\"{}\">\n      <error message=\"{}\" type=\"sheet-error\">{}</error>\n    </testcase>\n",
                xml(&s.sheet),
                xml(&s.sheet),
                xml(first),
                xml(e)
            ));
        }
        for c in &s.checks {
            out.push_str(&format!(
                "    <testcase classname=\"{}\" name=\"{}:{} {}\" file=\"{}\" line=\"{}\">\n",
                xml(&s.sheet),
                xml(&c.file),
                c.line,
                xml(&c.expr),
                xml(&c.file),
                c.line
            ));
            let mut detail = format!(
                "computed {}, expected {}, |difference| {}, allowed {}",
                c.lhs_display, c.rhs_display, c.error_display, c.tolerance_display
            );
            if let Some(o) = &c.over {
                detail.push_str("; ");
                detail.push_str(o);
            }
            if c.passed {
                out.push_str(&format!("      <system-out>{}</system-out>\n", xml(&detail)));
            } else {
                out.push_str(&format!(
                    "      <failure message=\"{}\" type=\"check-failed\">{}:{}: {}\n{}</failure>\n",
                    xml(&detail),
                    xml(&c.file),
                    c.line,
                    xml(&c.expr),
                    xml(&detail)
                ));
            }
            out.push_str("    </testcase>\n");
        }
        out.push_str("  </testsuite>\n");
    }
    out.push_str("</testsuites>\n");
    out
}
