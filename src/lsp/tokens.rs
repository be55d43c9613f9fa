//! Semantic tokens (`analysis::tokens`) for the whole document: the
//! legend, and each token as the protocol encodes it (line and start
//! relative to the previous token, length in UTF-16 units).

use lsp_types::{
    SemanticToken, SemanticTokenModifier, SemanticTokenType, SemanticTokens, SemanticTokensFullOptions,
    SemanticTokensLegend, SemanticTokensOptions, SemanticTokensParams, SemanticTokensResult,
    SemanticTokensServerCapabilities,
};

use super::{convert, Server};
use crate::analysis::tokens::{tokens, TokenKind};

/// The legend's types, in the order of `TokenKind`'s protocol numbers.
fn types() -> Vec<SemanticTokenType> {
    vec![
        SemanticTokenType::VARIABLE,
        SemanticTokenType::FUNCTION,
        SemanticTokenType::NUMBER,
        SemanticTokenType::OPERATOR,
        SemanticTokenType::COMMENT,
        SemanticTokenType::KEYWORD,
        SemanticTokenType::STRING,
        SemanticTokenType::PROPERTY,
        SemanticTokenType::TYPE,
        SemanticTokenType::MACRO,
        SemanticTokenType::PARAMETER,
    ]
}

fn type_index(k: TokenKind) -> u32 {
    match k {
        TokenKind::Name => 0,
        TokenKind::Function => 1,
        TokenKind::Number => 2,
        TokenKind::Operator => 3,
        TokenKind::Comment => 4,
        TokenKind::Keyword => 5,
        TokenKind::Quoted => 6,
        TokenKind::Field => 7,
        TokenKind::Unit => 8,
        TokenKind::Directive => 9,
        TokenKind::Local => 10,
    }
}

pub fn options() -> SemanticTokensServerCapabilities {
    SemanticTokensServerCapabilities::SemanticTokensOptions(SemanticTokensOptions {
        legend: SemanticTokensLegend {
            token_types: types(),
            token_modifiers: vec![SemanticTokenModifier::DECLARATION],
        },
        full: Some(SemanticTokensFullOptions::Bool(true)),
        range: None,
        work_done_progress_options: Default::default(),
    })
}

pub fn full(server: &Server, p: &SemanticTokensParams) -> Option<SemanticTokensResult> {
    let open = server.docs.get(p.text_document.uri.as_str())?;
    let doc = &open.doc;
    let (text, starts) = (doc.text(), doc.line_starts());
    let mut data = Vec::new();
    let (mut line, mut col) = (0u32, 0u32);
    for t in tokens(doc, 0..doc.line_count()) {
        let a = convert::position(text, starts, t.range.start);
        let length = text[t.range.clone()].encode_utf16().count() as u32;
        let delta_line = a.line - line;
        let delta_start = if delta_line == 0 {
            a.character - col
        } else {
            a.character
        };
        data.push(SemanticToken {
            delta_line,
            delta_start,
            length,
            token_type: type_index(t.kind),
            token_modifiers_bitset: u32::from(t.defines),
        });
        (line, col) = (a.line, a.character);
    }
    Some(SemanticTokensResult::Tokens(SemanticTokens { result_id: None, data }))
}
