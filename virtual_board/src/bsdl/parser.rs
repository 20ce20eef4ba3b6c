//! The BSDL entity's syntax: generics, ports, `use` clauses, attributes and constants.
//!
//! The parser knows the shape of the statements, not the meaning of the
//! attribute values: those stay token lists for `lower` to interpret.

use super::error::BsdlErrorKind;
use super::lexer::{Tok, Token};

/// A parse failure: byte offset and what is wrong.
pub type SyntaxError = (usize, usize, BsdlErrorKind);

/// Type of a declared port.
#[derive(Clone, Debug, PartialEq)]
pub enum PortType {
    /// `bit`
    Bit,
    /// `bit_vector(left to|downto right)`; `downto` = true for downto.
    Vector {
        /// Left index.
        left: i64,
        /// Right index.
        right: i64,
        /// True for `downto`.
        downto: bool,
    },
    /// Another type name (2013 linkage subtypes), upper-cased.
    Other(String),
}

/// One declared port.
#[derive(Clone, Debug, PartialEq)]
pub struct PortDecl {
    /// Name as written.
    pub name: String,
    /// Mode, upper-cased.
    pub mode: String,
    /// Type.
    pub ty: PortType,
    /// Byte offset and length of the name.
    pub at: (usize, usize),
}

/// One `attribute NAME of TARGET : CLASS is VALUE;`.
#[derive(Clone, Debug, PartialEq)]
pub struct AttributeDecl {
    /// Attribute name, upper-cased.
    pub name: String,
    /// Byte offset and length of the name.
    pub at: (usize, usize),
    /// Target as written (entity or port name).
    pub target: String,
    /// Byte offset and length of the target.
    pub target_at: (usize, usize),
    /// Entity class after the `:` (`ENTITY`, `SIGNAL`), upper-cased.
    pub class: String,
    /// Byte offset and length of the class.
    pub class_at: (usize, usize),
    /// Value tokens, up to the `;`.
    pub value: Vec<Token>,
}

/// One `constant NAME : TYPE := VALUE;`.
#[derive(Clone, Debug, PartialEq)]
pub struct ConstantDecl {
    /// Name as written.
    pub name: String,
    /// Type, upper-cased.
    pub ty: String,
    /// Byte offset and length of the name.
    pub at: (usize, usize),
    /// Value tokens.
    pub value: Vec<Token>,
}

/// One generic with its default.
#[derive(Clone, Debug, PartialEq)]
pub struct GenericDecl {
    /// Name, upper-cased.
    pub name: String,
    /// Default string value and its offset and length.
    pub default: Option<(String, usize, usize)>,
    /// Byte offset and length of the name.
    pub at: (usize, usize),
}

/// The statements of the file that matter to the model.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Syntax {
    /// Entity name as written, with its offset and length.
    pub entity: Option<(String, usize, usize)>,
    /// Generics.
    pub generics: Vec<GenericDecl>,
    /// Ports in declared order.
    pub ports: Vec<PortDecl>,
    /// `use` packages (upper-cased) with their offsets.
    pub uses: Vec<(String, usize)>,
    /// Attributes in file order.
    pub attributes: Vec<AttributeDecl>,
    /// Constants in file order.
    pub constants: Vec<ConstantDecl>,
    /// Statements skipped, with their offsets (for warnings).
    pub skipped: Vec<(String, usize)>,
}

struct Parser<'a> {
    text: &'a str,
    tokens: &'a [Token],
    pos: usize,
}

/// Parses the token list of a BSDL file.
///
/// # Errors
/// The first statement that does not have the grammar's shape.
pub fn parse(text: &str, tokens: &[Token]) -> Result<Syntax, SyntaxError> {
    let mut p = Parser {
        text,
        tokens,
        pos: 0,
    };
    let mut syntax = Syntax::default();
    while !p.at_eof() {
        if p.peek().is_word("ENTITY") && syntax.entity.is_none() {
            p.bump();
            let (name, off, len) = p.ident("entity name")?;
            p.expect_word("IS")?;
            syntax.entity = Some((name, off, len));
            p.entity_body(&mut syntax)?;
        } else if p.peek().is_word("USE") {
            p.bump();
            let (name, off) = p.use_clause()?;
            syntax.uses.push((name, off));
        } else {
            let t = p.peek().clone();
            syntax.skipped.push((t.describe(text), t.offset));
            p.skip_statement();
        }
    }
    Ok(syntax)
}

impl<'a> Parser<'a> {
    fn peek(&self) -> &'a Token {
        &self.tokens[self.pos.min(self.tokens.len() - 1)]
    }

    fn at_eof(&self) -> bool {
        matches!(self.peek().tok, Tok::Eof)
    }

    fn bump(&mut self) -> &'a Token {
        let t = self.peek();
        if !self.at_eof() {
            self.pos += 1;
        }
        t
    }

    fn error<T>(&self, expected: &'static str) -> Result<T, SyntaxError> {
        let t = self.peek();
        Err((
            t.offset,
            t.len,
            BsdlErrorKind::Unexpected {
                expected,
                found: t.describe(self.text),
            },
        ))
    }

    fn written(&self, t: &Token) -> String {
        self.text
            .get(t.offset..t.offset + t.len)
            .unwrap_or("")
            .to_string()
    }

    fn ident(&mut self, expected: &'static str) -> Result<(String, usize, usize), SyntaxError> {
        let t = self.peek();
        if let Tok::Ident(_) = t.tok {
            self.bump();
            Ok((self.written(t), t.offset, t.len))
        } else {
            self.error(expected)
        }
    }

    fn upper_ident(&mut self, expected: &'static str) -> Result<String, SyntaxError> {
        let t = self.peek();
        if let Tok::Ident(w) = &t.tok {
            self.bump();
            Ok(w.clone())
        } else {
            self.error(expected)
        }
    }

    fn expect_word(&mut self, word: &'static str) -> Result<(), SyntaxError> {
        if self.peek().is_word(word) {
            self.bump();
            Ok(())
        } else {
            self.error(word)
        }
    }

    fn expect_punct(&mut self, p: &'static str) -> Result<(), SyntaxError> {
        if self.peek().is_punct(p) {
            self.bump();
            Ok(())
        } else {
            self.error(match p {
                "(" => "`(`",
                ")" => "`)`",
                ";" => "`;`",
                ":" => "`:`",
                ":=" => "`:=`",
                "." => "`.`",
                _ => "punctuation",
            })
        }
    }

    fn skip_statement(&mut self) {
        while !self.at_eof() {
            if self.bump().is_punct(";") {
                return;
            }
        }
    }

    /// `NAME.all;` or `NAME.NAME.all;` after `use`.
    fn use_clause(&mut self) -> Result<(String, usize), SyntaxError> {
        let t = self.peek();
        let name = self.upper_ident("package name")?;
        while self.peek().is_punct(".") {
            self.bump();
            self.upper_ident("`all` or a name")?;
        }
        self.expect_punct(";")?;
        Ok((name, t.offset))
    }

    /// Tokens up to (not including) the `;` that ends the statement.
    fn value_tokens(&mut self) -> Result<Vec<Token>, SyntaxError> {
        let start = self.pos;
        let mut depth = 0i32;
        while !self.at_eof() {
            let t = self.peek();
            if t.is_punct("(") {
                depth += 1;
            } else if t.is_punct(")") {
                depth -= 1;
            } else if t.is_punct(";") && depth <= 0 {
                let value = self.tokens[start..self.pos].to_vec();
                self.bump();
                return Ok(value);
            }
            self.bump();
        }
        self.error("`;`")
    }

    fn entity_body(&mut self, syntax: &mut Syntax) -> Result<(), SyntaxError> {
        loop {
            let t = self.peek();
            match &t.tok {
                Tok::Eof => return self.error("`end` of the entity"),
                Tok::Ident(w) => match w.as_str() {
                    "END" => {
                        self.bump();
                        if let Tok::Ident(_) = self.peek().tok {
                            self.bump();
                        }
                        return self.expect_punct(";");
                    }
                    "GENERIC" => {
                        self.bump();
                        self.generics(syntax)?;
                    }
                    "PORT" => {
                        self.bump();
                        self.ports(syntax)?;
                    }
                    "USE" => {
                        self.bump();
                        let (name, off) = self.use_clause()?;
                        syntax.uses.push((name, off));
                    }
                    "ATTRIBUTE" => {
                        self.bump();
                        self.attribute(syntax)?;
                    }
                    "CONSTANT" => {
                        self.bump();
                        self.constant(syntax)?;
                    }
                    // Annex B allows nothing else inside the entity; skipping
                    // would silently drop a mistyped attribute.
                    _ => return self.error("attribute, constant, use, generic, port or end"),
                },
                _ => return self.error("attribute, constant, use, generic, port or end"),
            }
        }
    }

    fn generics(&mut self, syntax: &mut Syntax) -> Result<(), SyntaxError> {
        self.expect_punct("(")?;
        loop {
            let t = self.peek();
            let name = self.upper_ident("generic name")?;
            self.expect_punct(":")?;
            self.upper_ident("generic type")?;
            let mut default = None;
            if self.peek().is_punct(":=") {
                self.bump();
                let v = self.peek();
                match &v.tok {
                    Tok::Str(s) => {
                        self.bump();
                        default = Some((s.clone(), v.offset, v.len));
                    }
                    Tok::Ident(_) | Tok::Number(_) => {
                        self.bump();
                        default = Some((self.written(v), v.offset, v.len));
                    }
                    _ => return self.error("a default value"),
                }
            }
            syntax.generics.push(GenericDecl {
                name,
                default,
                at: (t.offset, t.len),
            });
            if self.peek().is_punct(";") {
                self.bump();
                continue;
            }
            self.expect_punct(")")?;
            return self.expect_punct(";");
        }
    }

    fn ports(&mut self, syntax: &mut Syntax) -> Result<(), SyntaxError> {
        self.expect_punct("(")?;
        loop {
            let mut names = vec![self.ident("port name")?];
            while self.peek().is_punct(",") {
                self.bump();
                names.push(self.ident("port name")?);
            }
            self.expect_punct(":")?;
            let mode = self.upper_ident("port mode (in, out, inout, buffer, linkage)")?;
            let ty = self.port_type(&mode)?;
            for (name, off, len) in names {
                syntax.ports.push(PortDecl {
                    name,
                    mode: mode.clone(),
                    ty: ty.clone(),
                    at: (off, len),
                });
            }
            if self.peek().is_punct(";") {
                self.bump();
                if self.peek().is_punct(")") {
                    // A stray `;` before the closing parenthesis: tolerated.
                    self.bump();
                    return self.expect_punct(";");
                }
                continue;
            }
            self.expect_punct(")")?;
            return self.expect_punct(";");
        }
    }

    fn port_type(&mut self, mode: &str) -> Result<PortType, SyntaxError> {
        let t = self.peek();
        let Tok::Ident(w) = &t.tok else {
            // A 2013 linkage subtype written as the mode itself, with no type.
            if mode != "IN" && mode != "OUT" && mode != "INOUT" && mode != "BUFFER" {
                return Ok(PortType::Other(mode.to_string()));
            }
            return self.error("port type (bit or bit_vector)");
        };
        self.bump();
        match w.as_str() {
            "BIT" => Ok(PortType::Bit),
            "BIT_VECTOR" => {
                self.expect_punct("(")?;
                let left = self.integer()?;
                let downto = if self.peek().is_word("DOWNTO") {
                    true
                } else if self.peek().is_word("TO") {
                    false
                } else {
                    return self.error("`to` or `downto`");
                };
                self.bump();
                let right = self.integer()?;
                self.expect_punct(")")?;
                Ok(PortType::Vector {
                    left,
                    right,
                    downto,
                })
            }
            other => Ok(PortType::Other(other.to_string())),
        }
    }

    fn integer(&mut self) -> Result<i64, SyntaxError> {
        let negative = if self.peek().is_punct("-") {
            self.bump();
            true
        } else {
            false
        };
        let t = self.peek();
        if let Tok::Number(n) = &t.tok {
            if let Ok(v) = n.replace('_', "").parse::<i64>() {
                self.bump();
                return Ok(if negative { -v } else { v });
            }
        }
        self.error("an integer")
    }

    fn attribute(&mut self, syntax: &mut Syntax) -> Result<(), SyntaxError> {
        let t = self.peek();
        let name = self.upper_ident("attribute name")?;
        if self.peek().is_punct(":") {
            // An attribute *declaration* (`attribute X : string;`), as vendor
            // packages write them: nothing to keep.
            self.skip_statement();
            return Ok(());
        }
        self.expect_word("OF")?;
        let (target, toff, tlen) = self.ident("attribute target")?;
        // `of A, B : signal is …` names several targets; keep the first.
        while self.peek().is_punct(",") {
            self.bump();
            self.ident("attribute target")?;
        }
        self.expect_punct(":")?;
        let c = self.peek();
        let class = self.upper_ident("entity or signal")?;
        self.expect_word("IS")?;
        let value = self.value_tokens()?;
        syntax.attributes.push(AttributeDecl {
            name,
            at: (t.offset, t.len),
            target,
            target_at: (toff, tlen),
            class,
            class_at: (c.offset, c.len),
            value,
        });
        Ok(())
    }

    fn constant(&mut self, syntax: &mut Syntax) -> Result<(), SyntaxError> {
        let (name, off, len) = self.ident("constant name")?;
        self.expect_punct(":")?;
        let ty = self.upper_ident("constant type")?;
        self.expect_punct(":=")?;
        let value = self.value_tokens()?;
        syntax.constants.push(ConstantDecl {
            name,
            ty,
            at: (off, len),
            value,
        });
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::super::lexer::tokenize;
    use super::*;

    #[test]
    fn entity_shape_is_read() {
        let text = r#"
            entity Chip is
              generic (PHYSICAL_PIN_MAP : string := "P1");
              port (A, B : in bit; D : inout bit_vector(3 downto 0));
              use STD_1149_1_2001.all;
              attribute INSTRUCTION_LENGTH of Chip : entity is 4;
              constant P1 : PIN_MAP_STRING := "A:1," & "B:2";
            end Chip;
        "#;
        let tokens = tokenize(text).unwrap();
        let s = parse(text, &tokens).unwrap();
        assert_eq!(s.entity.as_ref().unwrap().0, "Chip");
        assert_eq!(s.generics[0].default.as_ref().unwrap().0, "P1");
        assert_eq!(s.ports.len(), 3);
        assert_eq!(
            s.ports[2].ty,
            PortType::Vector {
                left: 3,
                right: 0,
                downto: true
            }
        );
        assert_eq!(s.uses[0].0, "STD_1149_1_2001");
        assert_eq!(s.attributes[0].name, "INSTRUCTION_LENGTH");
        assert_eq!(s.constants[0].value.len(), 3);
    }
}
