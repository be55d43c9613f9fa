//! Rename (`analysis::rename`): one workspace edit over this sheet, the
//! sheets it includes, and the open sheets that include it. A refusal is
//! an error answer carrying the reason, which editors show.

use std::collections::HashMap;

use lsp_server::ErrorCode;
use lsp_types::{PrepareRenameResponse, RenameParams, TextDocumentPositionParams, TextEdit, Uri, WorkspaceEdit};

use super::navigate::location;
use super::{convert, Server};
use crate::analysis::{navigate, rename, Place};

type Answer<T> = Result<T, (ErrorCode, String)>;

fn refused(why: String) -> (ErrorCode, String) {
    (ErrorCode::RequestFailed, why)
}

pub fn prepare(server: &Server, p: &TextDocumentPositionParams) -> Answer<Option<PrepareRenameResponse>> {
    let Some(open) = server.docs.get(p.text_document.uri.as_str()) else {
        return Ok(None);
    };
    let doc = &open.doc;
    let at = convert::offset(doc.text(), doc.line_starts(), p.position);
    let (_, r) = rename::prepare(doc, at).map_err(refused)?;
    Ok(Some(PrepareRenameResponse::Range(convert::range(
        doc.text(),
        doc.line_starts(),
        r,
    ))))
}

// lsp-types keys workspace edits by `Uri`, whose parsed parts are cached
// in cells; the key is never changed while in the map.
#[allow(clippy::mutable_key_type)]
pub fn rename(server: &Server, p: &RenameParams) -> Answer<Option<WorkspaceEdit>> {
    let tp = &p.text_document_position;
    let key = tp.text_document.uri.as_str();
    let Some(open) = server.docs.get(key) else {
        return Ok(None);
    };
    let doc = &open.doc;
    let at = convert::offset(doc.text(), doc.line_starts(), tp.position);
    let new = p.new_name.trim();
    let (old, _) = rename::prepare(doc, at).map_err(refused)?;
    let places = rename::rename(doc, at, new).map_err(refused)?;
    let mut changes: HashMap<Uri, Vec<TextEdit>> = HashMap::new();
    let mut add = |l: lsp_types::Location| {
        let v = changes.entry(l.uri).or_default();
        if !v.iter().any(|e| e.range == l.range) {
            v.push(TextEdit {
                range: l.range,
                new_text: new.to_string(),
            });
        }
    };
    for l in &places {
        if let Some(loc) = location(open, l) {
            add(loc);
        }
    }
    // Open sheets that include this one use its cells too.
    if let Some(canonical) = &open.canonical {
        for (k, other) in &server.docs {
            if k == key || !other.doc.reads(canonical) {
                continue;
            }
            if let Some(why) = rename::refusal(&other.doc, new) {
                let name = convert::uri_to_path(&other.uri).map_or_else(|| k.clone(), |p| p.display().to_string());
                return Err(refused(format!("in {name}: {why}")));
            }
            for l in navigate::uses(&other.doc, &old, true) {
                if l.place == Place::Main {
                    if let Some(loc) = location(other, &l) {
                        add(loc);
                    }
                }
            }
        }
    }
    Ok(Some(WorkspaceEdit {
        changes: Some(changes),
        ..WorkspaceEdit::default()
    }))
}
