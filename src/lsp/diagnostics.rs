//! Problems published on open and on every change: those of the open
//! sheet under its own URI, and those inside an included sheet under that
//! sheet's URI (unless the editor has it open: it then has its own), with
//! a copy at the `@include` line.

use std::collections::HashMap;

use lsp_types::{
    notification, Diagnostic, DiagnosticRelatedInformation, DiagnosticSeverity, Location, NumberOrString,
    PublishDiagnosticsParams, Uri,
};
use serde_json::json;

use super::{convert, Server};
use crate::analysis::{problems::problems, Document, Place};

/// The URI and text a place of `doc` is in.
fn target(uri: &Uri, doc: &Document, place: &Place) -> Option<(Uri, String)> {
    match place {
        Place::Main => Some((uri.clone(), doc.text().to_string())),
        Place::File(p) => Some((convert::path_to_uri(p)?, doc.file_text(p)?.to_string())),
    }
}

/// The protocol range of a byte range of `text`.
fn range_in(
    text: &str,
    cache: &mut HashMap<String, Vec<usize>>,
    key: &str,
    r: std::ops::Range<usize>,
) -> lsp_types::Range {
    let starts = cache
        .entry(key.to_string())
        .or_insert_with(|| convert::line_starts(text));
    convert::range(text, starts, r)
}

/// Publish the problems of document `key`.
pub fn publish(server: &mut Server, key: &str) {
    let Some(open) = server.docs.get(key) else { return };
    let doc = &open.doc;
    let mut by_uri: Vec<(Uri, Vec<Diagnostic>)> = vec![(open.uri.clone(), Vec::new())];
    let mut starts: HashMap<String, Vec<usize>> = HashMap::new();
    starts.insert(open.uri.as_str().to_string(), doc.line_starts().to_vec());
    let open_uris: Vec<String> = server.docs.keys().cloned().collect();
    for p in problems(doc, server.display) {
        let Some((uri, text)) = target(&open.uri, doc, &p.place) else {
            continue;
        };
        if uri != open.uri && open_uris.contains(&uri.as_str().to_string()) {
            continue;
        }
        let range = range_in(&text, &mut starts, uri.as_str(), p.range.clone());
        let related: Vec<DiagnosticRelatedInformation> = p
            .related
            .iter()
            .filter_map(|r| {
                let (u, t) = target(&open.uri, doc, &r.place)?;
                let range = range_in(&t, &mut starts, u.as_str(), r.range.clone());
                Some(DiagnosticRelatedInformation {
                    location: Location { uri: u, range },
                    message: r.text.clone(),
                })
            })
            .collect();
        let d = Diagnostic {
            range,
            severity: Some(if p.error {
                DiagnosticSeverity::ERROR
            } else {
                DiagnosticSeverity::WARNING
            }),
            code: p.code.map(|c| NumberOrString::String(c.to_string())),
            code_description: None,
            source: Some("ohmsheet".into()),
            message: p.full_text(),
            related_information: (!related.is_empty()).then_some(related),
            tags: None,
            data: Some(json!({"code": p.code, "hint": p.hint, "label": p.label})),
        };
        match by_uri.iter_mut().find(|(u, _)| *u == uri) {
            Some((_, v)) => v.push(d),
            None => by_uri.push((uri, vec![d])),
        }
    }
    let version = open.version;
    let previous = open.published_elsewhere.clone();
    let main_uri = open.uri.clone();
    // Included sheets that had problems and have none now are cleared.
    for u in previous {
        if !by_uri.iter().any(|(x, _)| *x == u) && !open_uris.contains(&u.as_str().to_string()) {
            by_uri.push((u, Vec::new()));
        }
    }
    let elsewhere: Vec<Uri> = by_uri
        .iter()
        .filter(|(u, v)| *u != main_uri && !v.is_empty())
        .map(|(u, _)| u.clone())
        .collect();
    if let Some(o) = server.docs.get_mut(key) {
        o.published_elsewhere = elsewhere;
    }
    for (uri, diagnostics) in by_uri {
        let version = (uri == main_uri).then_some(version);
        server.notify::<notification::PublishDiagnostics>(PublishDiagnosticsParams {
            uri,
            diagnostics,
            version,
        });
    }
}
