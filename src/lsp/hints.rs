//! Inlay hints: each cell's value and each check's verdict at the end of
//! its line (`analysis::hints`), as the protocol has them.

use lsp_types::{InlayHint, InlayHintLabel, InlayHintParams, InlayHintTooltip};

use super::{convert, Server};
use crate::analysis::hints::{hints, HintKind};

pub fn inlay_hints(server: &Server, p: &InlayHintParams) -> Vec<InlayHint> {
    let Some(open) = server.docs.get(p.text_document.uri.as_str()) else {
        return Vec::new();
    };
    let doc = &open.doc;
    let (text, starts) = (doc.text(), doc.line_starts());
    let first = p.range.start.line as usize;
    let last = p.range.end.line as usize;
    hints(doc, server.display, first..last.saturating_add(1))
        .into_iter()
        .map(|h| InlayHint {
            position: convert::position(text, starts, h.offset),
            label: InlayHintLabel::String(format!("{}{}", " ".repeat(h.pad), h.label)),
            kind: None,
            text_edits: None,
            tooltip: match h.kind {
                HintKind::Value => None,
                HintKind::Check { passed } => Some(InlayHintTooltip::String(
                    if passed { "the check holds" } else { "the check fails" }.into(),
                )),
            },
            padding_left: None,
            padding_right: None,
            data: None,
        })
        .collect()
}
