//! Hover: what the analysis layer says about the cell, function, unit or
//! directive under the cursor (`analysis::hover`), as Markdown.

use lsp_types::{Hover, HoverContents, HoverParams, MarkupContent, MarkupKind};

use super::{convert, Server};

pub fn hover(server: &Server, p: &HoverParams) -> Option<Hover> {
    let tp = &p.text_document_position_params;
    let open = server.docs.get(tp.text_document.uri.as_str())?;
    let doc = &open.doc;
    let at = convert::offset(doc.text(), doc.line_starts(), tp.position);
    let h = crate::analysis::hover::hover(doc, server.display, at)?;
    Some(Hover {
        contents: HoverContents::Markup(MarkupContent {
            kind: MarkupKind::Markdown,
            value: h.markdown,
        }),
        range: Some(convert::range(doc.text(), doc.line_starts(), h.range)),
    })
}
