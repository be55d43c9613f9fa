//! Code actions: the repairs the diagnostics suggest (`analysis::fixes`),
//! each a quick fix with its edit, for the diagnostics in the range asked.

use std::collections::HashMap;

use lsp_types::{
    CodeAction, CodeActionKind, CodeActionOrCommand, CodeActionParams, CodeActionResponse, TextEdit, WorkspaceEdit,
};

use super::navigate::location;
use super::Server;
use crate::analysis::fixes::repairs;
use crate::analysis::Place;

// lsp-types keys workspace edits by `Uri`, whose parsed parts are cached
// in cells; the key is never changed while in the map.
#[allow(clippy::mutable_key_type)]
pub fn code_actions(server: &Server, p: &CodeActionParams) -> Option<CodeActionResponse> {
    let open = server.docs.get(p.text_document.uri.as_str())?;
    let mut out = Vec::new();
    for r in repairs(&open.doc) {
        let Some(at) = location(open, &r.at) else { continue };
        // Only the problems in this document, on the lines asked about.
        if r.at.place != Place::Main || at.range.end.line < p.range.start.line || at.range.start.line > p.range.end.line
        {
            continue;
        }
        let Some(edit) = location(open, &r.edit) else { continue };
        let diagnostics: Vec<lsp_types::Diagnostic> = p
            .context
            .diagnostics
            .iter()
            .filter(|d| d.range == at.range)
            .cloned()
            .collect();
        let mut changes = HashMap::new();
        changes.insert(
            edit.uri,
            vec![TextEdit {
                range: edit.range,
                new_text: r.text,
            }],
        );
        out.push(CodeActionOrCommand::CodeAction(CodeAction {
            title: r.title,
            kind: Some(CodeActionKind::QUICKFIX),
            diagnostics: (!diagnostics.is_empty()).then_some(diagnostics),
            edit: Some(WorkspaceEdit {
                changes: Some(changes),
                ..WorkspaceEdit::default()
            }),
            is_preferred: Some(true),
            ..CodeAction::default()
        }));
    }
    Some(out)
}
