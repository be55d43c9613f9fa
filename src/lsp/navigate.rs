//! Go to definition (also into included sheets, and from an `@include`
//! line to the sheet it names) and find references, across includes.

use lsp_types::{GotoDefinitionParams, GotoDefinitionResponse, Location, ReferenceParams, Uri};

use super::{convert, Open, Server};
use crate::analysis::{navigate, Located, Place};

/// A place of the analysis as a protocol location.
pub fn location(open: &Open, l: &Located) -> Option<Location> {
    let (uri, text): (Uri, &str) = match &l.place {
        Place::Main => (open.uri.clone(), open.doc.text()),
        Place::File(p) => (convert::path_to_uri(p)?, open.doc.file_text(p).unwrap_or("")),
    };
    let starts = convert::line_starts(text);
    Some(Location {
        uri,
        range: convert::range(text, &starts, l.range.clone()),
    })
}

pub fn definition(server: &Server, p: &GotoDefinitionParams) -> Option<GotoDefinitionResponse> {
    let tp = &p.text_document_position_params;
    let open = server.docs.get(tp.text_document.uri.as_str())?;
    let at = convert::offset(open.doc.text(), open.doc.line_starts(), tp.position);
    let l = navigate::definition(&open.doc, at)?;
    Some(GotoDefinitionResponse::Scalar(location(open, &l)?))
}

pub fn references(server: &Server, p: &ReferenceParams) -> Vec<Location> {
    let tp = &p.text_document_position;
    let Some(open) = server.docs.get(tp.text_document.uri.as_str()) else {
        return Vec::new();
    };
    let at = convert::offset(open.doc.text(), open.doc.line_starts(), tp.position);
    navigate::references(&open.doc, at, p.context.include_declaration)
        .iter()
        .filter_map(|l| location(open, l))
        .collect()
}
