//! Reads a model formula (`rhs` or `lhs = rhs`) in plain mathematical
//! notation into expression trees, with errors that point at the character.
//!
//! Grammar (recursive descent, one token of look-ahead):
//! ```text
//! formula := expr ( '=' expr )?
//! expr    := term ( ('+' | '-') term )*
//! term    := unary ( ('*' | '/') unary )*
//! unary   := ('-' | '+') unary | power
//! power   := primary ( ('^' | '**') unary )?      right-associative
//! primary := number | name | name '(' expr ')' | '(' expr ')'
//! ```

use super::expr::{BinOp, Expr, Func};
use thiserror::Error;

/// Longest formula accepted, in characters; longer input is refused before parsing.
pub const MAX_FORMULA_CHARS: usize = 20_000;
/// Deepest expression tree accepted, so that every recursive pass stays within the stack.
pub const MAX_DEPTH: usize = 500;

/// The named constants: name, value, and how to write the value when a data
/// column takes the name.
pub const CONSTANTS: [(&str, f64, &str); 2] = [
    ("pi", std::f64::consts::PI, "4*atan(1)"),
    ("e", std::f64::consts::E, "exp(1)"),
];

/// A formula that could not be read, with the character where reading stopped.
#[derive(Debug, Clone, PartialEq, Error)]
#[error("{message} at character {} of the formula\n{}", position + 1, caret_block(formula, *position))]
pub struct ParseError {
    /// What was wrong and what was expected.
    pub message: String,
    /// Zero-based character offset into `formula`.
    pub position: usize,
    /// The formula as given (a long one is shortened around the position).
    pub formula: String,
}

/// Characters of a long formula shown on each side of the error position.
const SHOWN_AROUND: usize = 30;

/// The formula line and the caret line under it, each indented by two spaces:
/// line breaks and tabs shown as spaces (so the block stays two lines), and a
/// long formula cut to the part around `position`, marked with `...`.
fn caret_block(formula: &str, position: usize) -> String {
    let chars: Vec<char> = formula
        .chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect();
    let (start, end) = if chars.len() > 2 * SHOWN_AROUND + 20 {
        let start = position.saturating_sub(SHOWN_AROUND).min(chars.len());
        (start, (position + SHOWN_AROUND).min(chars.len()))
    } else {
        (0, chars.len())
    };
    let mut line: String = if start > 0 {
        "...".into()
    } else {
        String::new()
    };
    let caret = position - start + line.len();
    line.extend(&chars[start..end]);
    if end < chars.len() {
        line.push_str("...");
    }
    format!("  {line}\n  {}^", " ".repeat(caret))
}

/// The result of parsing: trees whose `Param(i)` nodes refer to `names[i]`;
/// binding to a dataset (`symbolic::model`) splits names into variables and parameters.
#[derive(Debug, Clone, PartialEq)]
pub struct ParsedFormula {
    /// Left side, when the formula has one (`log(y) = ...`).
    pub lhs: Option<Expr>,
    /// Right side: the model.
    pub rhs: Expr,
    /// Every name used, in order of first appearance.
    pub names: Vec<String>,
}

#[derive(Debug, Clone, PartialEq)]
enum Tok {
    Num(f64),
    Name(String),
    Op(char),
    Pow,
    LParen,
    RParen,
    Eq,
    End,
}

fn describe(t: &Tok) -> String {
    match t {
        Tok::Num(v) => format!("number {}", v),
        Tok::Name(n) => format!("name '{}'", n),
        Tok::Op(c) => format!("'{}'", c),
        Tok::Pow => "'^'".into(),
        Tok::LParen => "'('".into(),
        Tok::RParen => "')'".into(),
        Tok::Eq => "'='".into(),
        Tok::End => "end of formula".into(),
    }
}

struct Parser {
    chars: Vec<char>,
    toks: Vec<(Tok, usize)>,
    at: usize,
    names: Vec<String>,
    depth: usize,
    /// Constants' names that are data columns: read as names, not numbers.
    columns_named_as_constants: Vec<String>,
}

/// Parses a formula. Constants `pi` and `e` become numbers; every other name
/// not followed by `(` becomes a symbol; a name followed by `(` must be a known function.
pub fn parse_formula(text: &str) -> Result<ParsedFormula, ParseError> {
    parse_formula_for(text, &[])
}

/// Parses a formula for a table with these `columns`: as [`parse_formula`],
/// except that a column named `e` or `pi` is that column (a symbol); the
/// constant applies only when no column has the name.
pub fn parse_formula_for(text: &str, columns: &[String]) -> Result<ParsedFormula, ParseError> {
    let chars: Vec<char> = text.chars().collect();
    if chars.len() > MAX_FORMULA_CHARS {
        return Err(ParseError {
            message: format!(
                "formula is {} characters long; the limit is {}",
                chars.len(),
                MAX_FORMULA_CHARS
            ),
            position: 0,
            formula: chars[..60].iter().collect::<String>() + "...",
        });
    }
    let toks = tokenize(&chars, text)?;
    let mut p = Parser {
        chars,
        toks,
        at: 0,
        names: Vec::new(),
        depth: 0,
        columns_named_as_constants: CONSTANTS
            .iter()
            .map(|(n, _, _)| n.to_string())
            .filter(|n| columns.contains(n))
            .collect(),
    };
    if matches!(p.peek(), Tok::End) {
        return Err(p.error_here("formula is empty: expected a model such as 'a*exp(-k*x)'"));
    }
    let first = p.expr()?;
    let (lhs, rhs) = if matches!(p.peek(), Tok::Eq) {
        p.at += 1;
        if matches!(p.peek(), Tok::End) {
            return Err(p.error_here("expected the model's right-hand side after '='"));
        }
        let rhs = p.expr()?;
        (Some(first), rhs)
    } else {
        (None, first)
    };
    match p.peek() {
        Tok::End => {}
        Tok::RParen => return Err(p.error_here("unbalanced ')': no '(' is open here")),
        Tok::Eq => return Err(p.error_here("a formula has at most one '='")),
        t => {
            let what = describe(t);
            return Err(p.error_here(&format!(
                "expected an operator (+ - * / ^) or the end, found {}",
                what
            )));
        }
    }
    Ok(ParsedFormula {
        lhs,
        rhs,
        names: p.names,
    })
}

fn tokenize(chars: &[char], text: &str) -> Result<Vec<(Tok, usize)>, ParseError> {
    let err = |pos: usize, msg: String| ParseError {
        message: msg,
        position: pos,
        formula: text.to_string(),
    };
    let mut out = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        if c.is_whitespace() {
            i += 1;
            continue;
        }
        let start = i;
        if c.is_ascii_digit() || (c == '.' && chars.get(i + 1).is_some_and(|d| d.is_ascii_digit()))
        {
            while i < chars.len() && (chars[i].is_ascii_digit() || chars[i] == '.') {
                i += 1;
            }
            if i < chars.len() && (chars[i] == 'e' || chars[i] == 'E') {
                let mut j = i + 1;
                if j < chars.len() && (chars[j] == '+' || chars[j] == '-') {
                    j += 1;
                }
                if j < chars.len() && chars[j].is_ascii_digit() {
                    while j < chars.len() && chars[j].is_ascii_digit() {
                        j += 1;
                    }
                    i = j;
                }
            }
            let s: String = chars[start..i].iter().collect();
            let v: f64 = s
                .parse()
                .map_err(|_| err(start, format!("'{}' is not a number", s)))?;
            if !v.is_finite() {
                // Would print as `inf` and read back as a name (found by fuzzing).
                return Err(err(
                    start,
                    format!("number '{}' is too large: the limit is about 1.8e308", s),
                ));
            }
            out.push((Tok::Num(v), start));
            continue;
        }
        if c.is_alphabetic() || c == '_' {
            while i < chars.len() && (chars[i].is_alphanumeric() || chars[i] == '_') {
                i += 1;
            }
            out.push((Tok::Name(chars[start..i].iter().collect()), start));
            continue;
        }
        let tok = match c {
            '+' | '-' | '/' => Tok::Op(c),
            '*' => {
                if chars.get(i + 1) == Some(&'*') {
                    i += 1;
                    Tok::Pow
                } else {
                    Tok::Op('*')
                }
            }
            '^' => Tok::Pow,
            '(' => Tok::LParen,
            ')' => Tok::RParen,
            '=' => Tok::Eq,
            '~' => {
                return Err(err(
                    start,
                    "unexpected character '~' (to name the response, write '=', \
                     as in 'y = a*exp(-k*x)')"
                        .into(),
                ))
            }
            _ => return Err(err(start, format!("unexpected character '{}'", c))),
        };
        i += 1;
        out.push((tok, start));
    }
    out.push((Tok::End, chars.len()));
    Ok(out)
}

impl Parser {
    fn peek(&self) -> &Tok {
        &self.toks[self.at].0
    }

    fn pos(&self) -> usize {
        self.toks[self.at].1
    }

    fn error_at(&self, pos: usize, msg: &str) -> ParseError {
        ParseError {
            message: msg.to_string(),
            position: pos,
            formula: self.chars.iter().collect(),
        }
    }

    fn error_here(&self, msg: &str) -> ParseError {
        self.error_at(self.pos(), msg)
    }

    fn enter(&mut self) -> Result<(), ParseError> {
        self.depth += 1;
        if self.depth > MAX_DEPTH {
            return Err(self.error_here(&format!(
                "formula is nested more than {} levels deep",
                MAX_DEPTH
            )));
        }
        Ok(())
    }

    fn expr(&mut self) -> Result<Expr, ParseError> {
        self.enter()?;
        let mut acc = self.term()?;
        let mut chain = 0;
        while let Tok::Op(c @ ('+' | '-')) = *self.peek() {
            self.at += 1;
            chain += 1;
            if self.depth + chain > MAX_DEPTH {
                return Err(self.error_here(&format!(
                    "formula has more than {} terms in one sum",
                    MAX_DEPTH
                )));
            }
            let rhs = self.term()?;
            let op = if c == '+' { BinOp::Add } else { BinOp::Sub };
            acc = Expr::Bin(op, Box::new(acc), Box::new(rhs));
        }
        self.depth -= 1;
        Ok(acc)
    }

    fn term(&mut self) -> Result<Expr, ParseError> {
        self.enter()?;
        let mut acc = self.unary()?;
        let mut chain = 0;
        while let Tok::Op(c @ ('*' | '/')) = *self.peek() {
            self.at += 1;
            chain += 1;
            if self.depth + chain > MAX_DEPTH {
                return Err(self.error_here(&format!(
                    "formula has more than {} factors in one product",
                    MAX_DEPTH
                )));
            }
            let rhs = self.unary()?;
            let op = if c == '*' { BinOp::Mul } else { BinOp::Div };
            acc = Expr::Bin(op, Box::new(acc), Box::new(rhs));
        }
        self.depth -= 1;
        Ok(acc)
    }

    fn unary(&mut self) -> Result<Expr, ParseError> {
        self.enter()?;
        let out = match *self.peek() {
            Tok::Op('-') => {
                self.at += 1;
                let a = self.unary()?;
                match a {
                    Expr::Num(v) => Expr::Num(-v),
                    other => Expr::Neg(Box::new(other)),
                }
            }
            Tok::Op('+') => {
                self.at += 1;
                self.unary()?
            }
            _ => self.power()?,
        };
        self.depth -= 1;
        Ok(out)
    }

    fn power(&mut self) -> Result<Expr, ParseError> {
        let base = self.primary()?;
        if matches!(self.peek(), Tok::Pow) {
            self.at += 1;
            let exp = self.unary()?;
            return Ok(Expr::Bin(BinOp::Pow, Box::new(base), Box::new(exp)));
        }
        Ok(base)
    }

    fn primary(&mut self) -> Result<Expr, ParseError> {
        let pos = self.pos();
        match self.peek().clone() {
            Tok::Num(v) => {
                self.at += 1;
                Ok(Expr::Num(v))
            }
            Tok::Name(name) => {
                self.at += 1;
                if matches!(self.peek(), Tok::LParen) {
                    let f = Func::from_name(&name).ok_or_else(|| {
                        self.error_at(
                            pos,
                            &format!(
                                "unknown function '{}'; known: {}",
                                name,
                                Func::ALL
                                    .iter()
                                    .map(|f| f.name())
                                    .collect::<Vec<_>>()
                                    .join(", ")
                            ),
                        )
                    })?;
                    self.at += 1;
                    if matches!(self.peek(), Tok::RParen) {
                        return Err(self.error_here(&format!("{}() needs an argument", name)));
                    }
                    let arg = self.expr()?;
                    self.expect_close(pos + name.chars().count())?;
                    return Ok(Expr::Call(f, Box::new(arg)));
                }
                if Func::from_name(&name).is_some() {
                    return Err(self.error_at(
                        pos,
                        &format!("'{}' is a function: write {}(...)", name, name),
                    ));
                }
                let constant = CONSTANTS
                    .iter()
                    .find(|(n, _, _)| *n == name)
                    .filter(|_| !self.columns_named_as_constants.contains(&name));
                match constant {
                    Some((_, value, _)) => Ok(Expr::Num(*value)),
                    None => {
                        let idx = match self.names.iter().position(|n| *n == name) {
                            Some(i) => i,
                            None => {
                                self.names.push(name);
                                self.names.len() - 1
                            }
                        };
                        Ok(Expr::Param(idx))
                    }
                }
            }
            Tok::LParen => {
                self.at += 1;
                if matches!(self.peek(), Tok::RParen) {
                    return Err(self.error_here("empty parentheses: expected an expression"));
                }
                let e = self.expr()?;
                self.expect_close(pos)?;
                Ok(e)
            }
            Tok::End => {
                Err(self.error_here("formula ends too early: expected a number, a name or '('"))
            }
            t => Err(self.error_here(&format!(
                "expected a number, a name or '(', found {}",
                describe(&t)
            ))),
        }
    }

    fn expect_close(&mut self, open_pos: usize) -> Result<(), ParseError> {
        if matches!(self.peek(), Tok::RParen) {
            self.at += 1;
            Ok(())
        } else if matches!(self.peek(), Tok::End) {
            Err(self.error_at(open_pos, "unbalanced '(': no ')' closes it"))
        } else {
            let what = describe(self.peek());
            Err(self.error_here(&format!("expected ')' or an operator, found {}", what)))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(s: &str) -> ParsedFormula {
        parse_formula(s).unwrap()
    }

    #[test]
    fn precedence_and_associativity() {
        let f = p("a + b*c^d^2");
        // a + (b * (c ^ (d ^ 2)))
        assert_eq!(f.names, vec!["a", "b", "c", "d"]);
        let v = f.rhs.eval(&[1.0, 2.0, 2.0, 1.5], &[]);
        assert!((v - (1.0 + 2.0 * 2f64.powf(1.5f64.powi(2)))).abs() < 1e-12);
        // unary minus binds looser than power: -x^2 = -(x^2)
        assert_eq!(p("-x^2").rhs.eval(&[3.0], &[]), -9.0);
        assert_eq!(p("2^-1").rhs.eval(&[], &[]), 0.5);
        assert_eq!(p("2**3").rhs.eval(&[], &[]), 8.0);
        assert_eq!(p("8/4/2").rhs.eval(&[], &[]), 1.0);
        assert_eq!(p("8-4-2").rhs.eval(&[], &[]), 2.0);
    }

    #[test]
    fn numbers_constants_functions() {
        assert_eq!(
            p(".5 + 1.2e-3 + 2E1").rhs.eval(&[], &[]),
            0.5 + 1.2e-3 + 20.0
        );
        assert!((p("cos(pi) + ln(e)").rhs.eval(&[], &[]) - 0.0).abs() < 1e-15);
        let f = p("log(y) = b1 - b2*x1*exp(-b3*x2)");
        assert!(f.lhs.is_some());
        assert_eq!(f.names, vec!["y", "b1", "b2", "x1", "b3", "x2"]);
    }

    #[test]
    fn a_column_named_like_a_constant_is_the_column() {
        let cols = vec!["e".to_string(), "x".to_string()];
        let f = parse_formula_for("e = a*exp(-k*x) + pi", &cols).unwrap();
        assert_eq!(f.names, vec!["e", "a", "k", "x"], "pi stays a constant");
        let lhs = f.lhs.unwrap();
        assert_eq!(lhs.eval(&[7.0, 0.0, 0.0, 0.0], &[]), 7.0);
        // Without such a column the names are the constants.
        let f = parse_formula_for("a*e + pi*x", &["x".to_string()]).unwrap();
        assert_eq!(f.names, vec!["a", "x"]);
        let v = f.rhs.eval(&[1.0, 1.0], &[]);
        assert!((v - (std::f64::consts::E + std::f64::consts::PI)).abs() < 1e-15);
    }

    #[test]
    fn a_tilde_gets_a_hint_to_write_equals() {
        let e = parse_formula("y ~ a*x").unwrap_err();
        assert_eq!(e.position, 2);
        assert!(e.message.contains("to name the response, write '='"), "{e}");
    }

    #[test]
    fn errors_point_at_the_character() {
        let e = parse_formula("a*(x+2").unwrap_err();
        assert_eq!(e.position, 2);
        assert!(e.message.contains("unbalanced '('"), "{}", e);
        let e = parse_formula("a*x)").unwrap_err();
        assert_eq!(e.position, 3);
        let e = parse_formula("a*foo(x)").unwrap_err();
        assert!(e.message.contains("unknown function 'foo'"));
        assert_eq!(e.position, 2);
        let e = parse_formula("a*").unwrap_err();
        assert_eq!(e.position, 2);
        assert!(parse_formula("").unwrap_err().message.contains("empty"));
        assert!(parse_formula("a $ b").unwrap_err().message.contains("'$'"));
        let shown = parse_formula("a+*b").unwrap_err().to_string();
        assert!(shown.contains("  a+*b\n    ^"), "{}", shown);
    }

    #[test]
    fn limits_are_errors_not_crashes() {
        let deep = "(".repeat(5_000) + "x" + &")".repeat(5_000);
        assert!(parse_formula(&deep).unwrap_err().message.contains("nested"));
        let long = "x+".repeat(6000) + "x";
        assert!(parse_formula(&long).is_err());
        let e = parse_formula("1e999*a*x").unwrap_err();
        assert!(e.message.contains("too large"), "{}", e);
        assert_eq!(e.position, 0);
        assert_eq!(p("1e308*a").rhs.eval(&[1.0], &[]), 1e308);
        assert_eq!(p("1e-400*a").rhs.eval(&[1.0], &[]), 0.0);
        let huge = "x".repeat(MAX_FORMULA_CHARS + 1);
        assert!(parse_formula(&huge).unwrap_err().message.contains("limit"));
    }

    #[test]
    fn ten_million_characters_are_refused_by_length_before_parsing() {
        let text = "a*x+".repeat(2_500_000);
        let e = parse_formula(&text).unwrap_err();
        assert_eq!(
            e.message,
            "formula is 10000000 characters long; the limit is 20000"
        );
        // 10^5 levels of nesting need more characters than the limit allows.
        let deep = "(".repeat(100_000) + "x" + &")".repeat(100_000);
        assert!(parse_formula(&deep)
            .unwrap_err()
            .message
            .contains("200001 characters"));
    }

    #[test]
    fn the_caret_block_is_two_lines_around_the_error() {
        // A line break in the formula is shown as a space.
        let shown = parse_formula("a*exp(\n-k*x").unwrap_err().to_string();
        assert_eq!(shown.lines().count(), 3, "{shown}");
        assert!(shown.ends_with("  a*exp( -k*x\n       ^"), "{shown}");
        // A long formula is cut around the error; the caret stays under it.
        let deep = "(".repeat(9_000) + "x" + &")".repeat(9_000);
        let e = parse_formula(&deep).unwrap_err();
        let shown = e.to_string();
        let lines: Vec<&str> = shown.lines().collect();
        assert_eq!(lines.len(), 3, "{shown}");
        assert!(lines[1].len() < 80, "{shown}");
        assert!(
            lines[1].starts_with("  ...(((") && lines[1].ends_with("..."),
            "{shown}"
        );
        assert_eq!(lines[2].find('^'), Some(2 + 3 + SHOWN_AROUND), "{shown}");
    }
}
