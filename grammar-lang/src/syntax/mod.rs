//! Syntax: tokens ([`lexer`]), tree ([`ast`]) and the recovering [`parser`].

pub mod ast;
pub mod lexer;
pub mod parser;

pub use ast::SyntaxFile;
pub use parser::parse;
