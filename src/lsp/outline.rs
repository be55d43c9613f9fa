//! Document symbols (`analysis::outline`): sections by comment headings,
//! cells, checks, networks with their elements, as a tree.

use lsp_types::{DocumentSymbol, DocumentSymbolParams, DocumentSymbolResponse, SymbolKind};

use super::{convert, Server};
use crate::analysis::outline::{outline, OutlineKind, Symbol};

fn kind(k: OutlineKind) -> SymbolKind {
    match k {
        OutlineKind::Section => SymbolKind::NAMESPACE,
        OutlineKind::Cell => SymbolKind::VARIABLE,
        OutlineKind::Check => SymbolKind::BOOLEAN,
        OutlineKind::Network => SymbolKind::MODULE,
        OutlineKind::Element => SymbolKind::FIELD,
    }
}

pub fn symbols(server: &Server, p: &DocumentSymbolParams) -> Option<DocumentSymbolResponse> {
    let open = server.docs.get(p.text_document.uri.as_str())?;
    let doc = &open.doc;
    let (text, starts) = (doc.text(), doc.line_starts());
    #[allow(deprecated)]
    fn conv(s: Symbol, text: &str, starts: &[usize]) -> DocumentSymbol {
        DocumentSymbol {
            name: s.name,
            detail: (!s.detail.is_empty()).then_some(s.detail),
            kind: kind(s.kind),
            tags: None,
            deprecated: None,
            range: convert::range(text, starts, s.range),
            selection_range: convert::range(text, starts, s.selection),
            children: (!s.children.is_empty()).then(|| s.children.into_iter().map(|c| conv(c, text, starts)).collect()),
        }
    }
    let v = outline(doc, server.display)
        .into_iter()
        .map(|s| conv(s, text, starts))
        .collect();
    Some(DocumentSymbolResponse::Nested(v))
}
