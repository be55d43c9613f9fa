//! Completion and signature help (`analysis::complete`), as the protocol
//! has them: the word typed so far is replaced by a text edit, a cell's
//! value and a function's signature are the item's detail, and parameter
//! places in a signature's label are UTF-16 offsets.

use lsp_types::{
    CompletionItem, CompletionItemKind, CompletionList, CompletionOptions, CompletionParams, CompletionResponse,
    CompletionTextEdit, Documentation, MarkupContent, MarkupKind, ParameterInformation, ParameterLabel, SignatureHelp,
    SignatureHelpOptions, SignatureHelpParams, SignatureInformation, TextEdit,
};

use super::{convert, Server};
use crate::analysis::complete::{complete, signature, ItemKind};

pub fn completion_options() -> CompletionOptions {
    CompletionOptions {
        trigger_characters: Some(vec![".".into(), "@".into()]),
        ..CompletionOptions::default()
    }
}

pub fn signature_options() -> SignatureHelpOptions {
    SignatureHelpOptions {
        trigger_characters: Some(vec!["(".into(), ",".into()]),
        retrigger_characters: None,
        work_done_progress_options: Default::default(),
    }
}

fn kind(k: ItemKind) -> CompletionItemKind {
    match k {
        ItemKind::Cell => CompletionItemKind::VARIABLE,
        ItemKind::Function => CompletionItemKind::FUNCTION,
        ItemKind::Constant => CompletionItemKind::CONSTANT,
        ItemKind::Unit => CompletionItemKind::UNIT,
        ItemKind::Directive | ItemKind::Keyword => CompletionItemKind::KEYWORD,
        ItemKind::Field => CompletionItemKind::FIELD,
        ItemKind::Element => CompletionItemKind::CLASS,
        ItemKind::Node => CompletionItemKind::REFERENCE,
    }
}

pub fn completion(server: &Server, p: &CompletionParams) -> Option<CompletionResponse> {
    let tp = &p.text_document_position;
    let open = server.docs.get(tp.text_document.uri.as_str())?;
    let doc = &open.doc;
    let (text, starts) = (doc.text(), doc.line_starts());
    let offset = convert::offset(text, starts, tp.position);
    let c = complete(doc, server.display, offset);
    let range = convert::range(text, starts, c.replace.clone());
    let items = c
        .items
        .into_iter()
        .map(|i| CompletionItem {
            label: i.label.clone(),
            kind: Some(kind(i.kind)),
            detail: (!i.detail.is_empty()).then_some(i.detail),
            documentation: i.doc.map(|d| {
                Documentation::MarkupContent(MarkupContent {
                    kind: MarkupKind::PlainText,
                    value: d,
                })
            }),
            filter_text: Some(i.label),
            text_edit: Some(CompletionTextEdit::Edit(TextEdit {
                range,
                new_text: i.insert,
            })),
            ..CompletionItem::default()
        })
        .collect();
    Some(CompletionResponse::List(CompletionList {
        is_incomplete: false,
        items,
    }))
}

/// UTF-16 length of a string.
fn u16_len(s: &str) -> u32 {
    s.encode_utf16().count() as u32
}

pub fn signature_help(server: &Server, p: &SignatureHelpParams) -> Option<SignatureHelp> {
    let tp = &p.text_document_position_params;
    let open = server.docs.get(tp.text_document.uri.as_str())?;
    let doc = &open.doc;
    let offset = convert::offset(doc.text(), doc.line_starts(), tp.position);
    let s = signature(doc, offset)?;
    let params = s
        .params
        .iter()
        .map(|r| ParameterInformation {
            label: ParameterLabel::LabelOffsets([u16_len(&s.label[..r.start]), u16_len(&s.label[..r.end])]),
            documentation: None,
        })
        .collect();
    let active = s.active as u32;
    Some(SignatureHelp {
        signatures: vec![SignatureInformation {
            label: s.label,
            documentation: Some(Documentation::MarkupContent(MarkupContent {
                kind: MarkupKind::PlainText,
                value: s.doc,
            })),
            parameters: Some(params),
            active_parameter: Some(active),
        }],
        active_signature: Some(0),
        active_parameter: Some(active),
    })
}
