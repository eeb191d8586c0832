//! Arithmetic expressions in case files: `"D/2 + 0.5"`, `"-L/2"`, `"sqrt(A/pi)"`.
//!
//! Grammar (whitespace ignored), lowest precedence first:
//!
//! ```text
//! expr    := term (('+' | '-') term)*
//! term    := unary (('*' | '/') unary)*
//! unary   := ('+' | '-') unary | power
//! power   := primary ('^' unary)?          right-associative: 2^3^2 = 2^9; -2^2 = -4
//! primary := number | name | name '(' expr (',' expr)* ')' | '(' expr ')'
//! ```
//!
//! Names are parameters from `[parameters]` or the constant `pi` (also `π`). Functions:
//! `sqrt`, `sin`, `cos`, `tan` (arguments in **radians**: write `sin(30*pi/180)` for 30°),
//! `abs`, and the two-argument `min(a, b)`, `max(a, b)`. The typographic operators `−`, `×`
//! and `÷` are accepted as `-`, `*` and `/`.
//!
//! Why our own parser rather than the `exmex` crate in the workspace: exmex's `min`/`max`
//! are infix binary operators (`a min b`), not the `min(a, b)` calls the case format
//! promises; it predefines the constants `E`, `e`, `TAU` that would shadow parameters of
//! those names; and we want the byte offset of an undefined name or a zero divisor to
//! underline it in the file. The grammar is small enough to test exhaustively here.

use std::ops::Range;

/// What went wrong in an expression; `at` is a byte range within the expression text.
#[derive(Clone, Debug, PartialEq)]
pub struct ExprError {
    pub kind: ExprErrorKind,
    pub at: Range<usize>,
    pub message: String,
}

#[derive(Clone, Debug, PartialEq)]
pub enum ExprErrorKind {
    Syntax,
    /// A name that is neither a parameter nor a constant.
    Undefined(String),
    DivisionByZero,
    /// The result (or an intermediate one, such as `sqrt(-1)`) is not a finite number.
    NotFinite,
}

#[derive(Clone, Copy, Debug, PartialEq)]
enum BinOp {
    Add,
    Sub,
    Mul,
    Div,
    Pow,
}

#[derive(Clone, Copy, Debug, PartialEq)]
enum Func {
    Sqrt,
    Sin,
    Cos,
    Tan,
    Abs,
    Min,
    Max,
}

impl Func {
    fn from_name(s: &str) -> Option<Func> {
        Some(match s {
            "sqrt" => Func::Sqrt,
            "sin" => Func::Sin,
            "cos" => Func::Cos,
            "tan" => Func::Tan,
            "abs" => Func::Abs,
            "min" => Func::Min,
            "max" => Func::Max,
            _ => return None,
        })
    }
    fn arity(self) -> usize {
        match self {
            Func::Min | Func::Max => 2,
            _ => 1,
        }
    }
}

/// Names that cannot be used as parameters (constants and functions).
pub const RESERVED: [&str; 9] = ["pi", "π", "sqrt", "sin", "cos", "tan", "abs", "min", "max"];

#[derive(Clone, Debug, PartialEq)]
enum Node {
    Num(f64),
    Var(String, Range<usize>),
    Neg(Box<Node>),
    Bin(BinOp, Box<Node>, Box<Node>, Range<usize>),
    Call(Func, Vec<Node>, Range<usize>),
}

/// A parsed expression, ready to evaluate against any set of parameter values.
#[derive(Clone, Debug, PartialEq)]
pub struct Expr {
    root: Node,
}

#[derive(Clone, Debug, PartialEq)]
enum Tok {
    Num(f64),
    Name(String),
    Op(char),
    LParen,
    RParen,
    Comma,
}

fn syntax(at: Range<usize>, message: impl Into<String>) -> ExprError {
    ExprError {
        kind: ExprErrorKind::Syntax,
        at,
        message: message.into(),
    }
}

fn tokenize(s: &str) -> Result<Vec<(Tok, Range<usize>)>, ExprError> {
    let mut out = Vec::new();
    let chars: Vec<(usize, char)> = s.char_indices().collect();
    let end_of = |k: usize| chars.get(k).map_or(s.len(), |c| c.0);
    let mut k = 0;
    while k < chars.len() {
        let (i, c) = chars[k];
        if c.is_whitespace() {
            k += 1;
            continue;
        }
        if c.is_ascii_digit() || c == '.' {
            let mut j = k;
            while j < chars.len() && (chars[j].1.is_ascii_digit() || chars[j].1 == '.') {
                j += 1;
            }
            // Exponent only when followed by digits, so that `2e` is an error, not `2*e`.
            if j < chars.len() && (chars[j].1 == 'e' || chars[j].1 == 'E') {
                let mut m = j + 1;
                if m < chars.len() && (chars[m].1 == '+' || chars[m].1 == '-') {
                    m += 1;
                }
                if m < chars.len() && chars[m].1.is_ascii_digit() {
                    while m < chars.len() && chars[m].1.is_ascii_digit() {
                        m += 1;
                    }
                    j = m;
                }
            }
            let text = &s[i..end_of(j)];
            let v: f64 = text
                .parse()
                .map_err(|_| syntax(i..end_of(j), format!("bad number `{text}`")))?;
            out.push((Tok::Num(v), i..end_of(j)));
            k = j;
            continue;
        }
        if c.is_alphabetic() || c == '_' {
            let mut j = k;
            while j < chars.len() && (chars[j].1.is_alphanumeric() || chars[j].1 == '_') {
                j += 1;
            }
            out.push((Tok::Name(s[i..end_of(j)].to_string()), i..end_of(j)));
            k = j;
            continue;
        }
        let tok = match c {
            '+' => Tok::Op('+'),
            '-' | '−' => Tok::Op('-'),
            '*' | '×' => Tok::Op('*'),
            '/' | '÷' => Tok::Op('/'),
            '^' => Tok::Op('^'),
            '(' => Tok::LParen,
            ')' => Tok::RParen,
            ',' => Tok::Comma,
            _ => {
                return Err(syntax(
                    i..end_of(k + 1),
                    format!("unexpected character `{c}`"),
                ))
            }
        };
        out.push((tok, i..end_of(k + 1)));
        k += 1;
    }
    Ok(out)
}

struct Parser {
    toks: Vec<(Tok, Range<usize>)>,
    pos: usize,
    len: usize,
}

impl Parser {
    fn peek(&self) -> Option<&Tok> {
        self.toks.get(self.pos).map(|t| &t.0)
    }
    fn here(&self) -> Range<usize> {
        self.toks
            .get(self.pos)
            .map_or(self.len..self.len, |t| t.1.clone())
    }
    fn next(&mut self) -> Option<(Tok, Range<usize>)> {
        let t = self.toks.get(self.pos).cloned();
        self.pos += 1;
        t
    }
    fn expr(&mut self) -> Result<Node, ExprError> {
        let mut lhs = self.term()?;
        while let Some(Tok::Op(c @ ('+' | '-'))) = self.peek().cloned() {
            let at = self.here();
            self.pos += 1;
            let rhs = self.term()?;
            let op = if c == '+' { BinOp::Add } else { BinOp::Sub };
            lhs = Node::Bin(op, Box::new(lhs), Box::new(rhs), at);
        }
        Ok(lhs)
    }
    fn term(&mut self) -> Result<Node, ExprError> {
        let mut lhs = self.unary()?;
        while let Some(Tok::Op(c @ ('*' | '/'))) = self.peek().cloned() {
            let at = self.here();
            self.pos += 1;
            let start = self.here().start;
            let rhs = self.unary()?;
            let end = self
                .toks
                .get(self.pos.saturating_sub(1))
                .map_or(self.len, |t| t.1.end);
            // For a division, remember where the divisor is, to underline it if it is zero.
            let (op, at) = if c == '*' {
                (BinOp::Mul, at)
            } else {
                (BinOp::Div, start..end)
            };
            lhs = Node::Bin(op, Box::new(lhs), Box::new(rhs), at);
        }
        Ok(lhs)
    }
    fn unary(&mut self) -> Result<Node, ExprError> {
        match self.peek() {
            Some(Tok::Op('-')) => {
                self.pos += 1;
                Ok(Node::Neg(Box::new(self.unary()?)))
            }
            Some(Tok::Op('+')) => {
                self.pos += 1;
                self.unary()
            }
            _ => self.power(),
        }
    }
    fn power(&mut self) -> Result<Node, ExprError> {
        let base = self.primary()?;
        if let Some(Tok::Op('^')) = self.peek() {
            let at = self.here();
            self.pos += 1;
            let exp = self.unary()?;
            return Ok(Node::Bin(BinOp::Pow, Box::new(base), Box::new(exp), at));
        }
        Ok(base)
    }
    fn primary(&mut self) -> Result<Node, ExprError> {
        let at = self.here();
        match self.next() {
            Some((Tok::Num(v), _)) => Ok(Node::Num(v)),
            Some((Tok::LParen, _)) => {
                let e = self.expr()?;
                match self.next() {
                    Some((Tok::RParen, _)) => Ok(e),
                    _ => Err(syntax(at, "unclosed `(`")),
                }
            }
            Some((Tok::Name(name), r)) => {
                if let Some(Tok::LParen) = self.peek() {
                    let Some(f) = Func::from_name(&name) else {
                        return Err(syntax(
                            r,
                            format!(
                                "unknown function `{name}` (known: sqrt, sin, cos, tan, abs, \
                                 min, max)"
                            ),
                        ));
                    };
                    self.pos += 1;
                    let mut args = vec![self.expr()?];
                    loop {
                        match self.next() {
                            Some((Tok::Comma, _)) => args.push(self.expr()?),
                            Some((Tok::RParen, close)) => {
                                if args.len() != f.arity() {
                                    return Err(syntax(
                                        r.start..close.end,
                                        format!(
                                            "`{name}` takes {} argument(s), got {}",
                                            f.arity(),
                                            args.len()
                                        ),
                                    ));
                                }
                                return Ok(Node::Call(f, args, r.start..close.end));
                            }
                            _ => return Err(syntax(r, format!("unclosed `{name}(`"))),
                        }
                    }
                }
                if name == "pi" || name == "π" {
                    return Ok(Node::Num(std::f64::consts::PI));
                }
                if Func::from_name(&name).is_some() {
                    return Err(syntax(
                        r,
                        format!("`{name}` is a function: write `{name}(...)`"),
                    ));
                }
                Ok(Node::Var(name, r))
            }
            Some((t, r)) => Err(syntax(r, format!("unexpected {}", describe(&t)))),
            None => Err(syntax(at, "expression ends too early")),
        }
    }
}

fn describe(t: &Tok) -> String {
    match t {
        Tok::Num(v) => format!("number {v}"),
        Tok::Name(n) => format!("name `{n}`"),
        Tok::Op(c) => format!("`{c}`"),
        Tok::LParen => "`(`".into(),
        Tok::RParen => "`)`".into(),
        Tok::Comma => "`,`".into(),
    }
}

impl Expr {
    /// Parses `text`; errors carry the byte range of the problem within `text`.
    pub fn parse(text: &str) -> Result<Expr, ExprError> {
        let toks = tokenize(text)?;
        if toks.is_empty() {
            return Err(syntax(0..text.len(), "empty expression"));
        }
        let mut p = Parser {
            toks,
            pos: 0,
            len: text.len(),
        };
        let root = p.expr()?;
        if p.pos < p.toks.len() {
            let (t, r) = p.toks[p.pos].clone();
            return Err(syntax(
                r,
                format!("unexpected {} after the expression", describe(&t)),
            ));
        }
        Ok(Expr { root })
    }

    /// The parameter names used, each with its first byte range, in order of appearance.
    pub fn names(&self) -> Vec<(String, Range<usize>)> {
        fn walk(n: &Node, out: &mut Vec<(String, Range<usize>)>) {
            match n {
                Node::Num(_) => {}
                Node::Var(s, r) => {
                    if !out.iter().any(|(o, _)| o == s) {
                        out.push((s.clone(), r.clone()));
                    }
                }
                Node::Neg(a) => walk(a, out),
                Node::Bin(_, a, b, _) => {
                    walk(a, out);
                    walk(b, out);
                }
                Node::Call(_, args, _) => args.iter().for_each(|a| walk(a, out)),
            }
        }
        let mut out = Vec::new();
        walk(&self.root, &mut out);
        out
    }

    /// Evaluates with `lookup` giving parameter values. Fails on an undefined name, a zero
    /// divisor, or any non-finite intermediate result.
    pub fn eval(&self, lookup: &dyn Fn(&str) -> Option<f64>) -> Result<f64, ExprError> {
        fn finite(v: f64, at: &Range<usize>, what: &str) -> Result<f64, ExprError> {
            if v.is_finite() {
                Ok(v)
            } else {
                Err(ExprError {
                    kind: ExprErrorKind::NotFinite,
                    at: at.clone(),
                    message: format!("{what} is not a finite number"),
                })
            }
        }
        fn ev(n: &Node, lookup: &dyn Fn(&str) -> Option<f64>) -> Result<f64, ExprError> {
            Ok(match n {
                Node::Num(v) => *v,
                Node::Var(s, r) => lookup(s).ok_or_else(|| ExprError {
                    kind: ExprErrorKind::Undefined(s.clone()),
                    at: r.clone(),
                    message: format!("`{s}` is not defined in [parameters]"),
                })?,
                Node::Neg(a) => -ev(a, lookup)?,
                Node::Bin(op, a, b, at) => {
                    let (x, y) = (ev(a, lookup)?, ev(b, lookup)?);
                    match op {
                        BinOp::Add => finite(x + y, at, "the sum")?,
                        BinOp::Sub => finite(x - y, at, "the difference")?,
                        BinOp::Mul => finite(x * y, at, "the product")?,
                        BinOp::Div => {
                            if y == 0.0 {
                                return Err(ExprError {
                                    kind: ExprErrorKind::DivisionByZero,
                                    at: at.clone(),
                                    message: "division by zero".into(),
                                });
                            }
                            finite(x / y, at, "the quotient")?
                        }
                        BinOp::Pow => finite(x.powf(y), at, "the power")?,
                    }
                }
                Node::Call(f, args, at) => {
                    let x = ev(&args[0], lookup)?;
                    let v = match f {
                        Func::Sqrt => x.sqrt(),
                        Func::Sin => x.sin(),
                        Func::Cos => x.cos(),
                        Func::Tan => x.tan(),
                        Func::Abs => x.abs(),
                        Func::Min => x.min(ev(&args[1], lookup)?),
                        Func::Max => x.max(ev(&args[1], lookup)?),
                    };
                    finite(v, at, "the function's result")?
                }
            })
        }
        ev(&self.root, lookup)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn eval(s: &str) -> Result<f64, ExprError> {
        let vars = |n: &str| match n {
            "D" => Some(25.0),
            "L" => Some(150.0),
            "A" => Some(std::f64::consts::PI * 4.0),
            "zero" => Some(0.0),
            _ => None,
        };
        Expr::parse(s)?.eval(&vars)
    }

    #[test]
    fn arithmetic_and_precedence() {
        assert_eq!(eval("D/2 + 0.5").unwrap(), 13.0);
        assert_eq!(eval("-L/2").unwrap(), -75.0);
        assert_eq!(eval("1 + 2 * 3").unwrap(), 7.0);
        assert_eq!(eval("(1 + 2) * 3").unwrap(), 9.0);
        assert_eq!(eval("2^3^2").unwrap(), 512.0);
        assert_eq!(eval("-2^2").unwrap(), -4.0);
        assert_eq!(eval("2^-1").unwrap(), 0.5);
        assert_eq!(eval("8 / 4 / 2").unwrap(), 1.0);
        assert_eq!(eval("10 - 3 - 2").unwrap(), 5.0);
        assert_eq!(eval("1.5e3 + 2E-1").unwrap(), 1500.2);
        assert_eq!(eval("3 × 4 − 2 ÷ 2").unwrap(), 11.0);
    }

    #[test]
    fn functions_and_constants() {
        assert!((eval("sqrt(A/pi)").unwrap() - 2.0).abs() < 1e-12);
        assert!((eval("sin(pi/6)").unwrap() - 0.5).abs() < 1e-12); // radians
        assert!((eval("cos(0)").unwrap() - 1.0).abs() < 1e-12);
        assert_eq!(eval("min(D, L)").unwrap(), 25.0);
        assert_eq!(eval("max(D, L) + abs(-1)").unwrap(), 151.0);
        assert_eq!(eval("max(min(1, 2), 0.5)").unwrap(), 1.0);
    }

    #[test]
    fn errors_point_at_the_problem() {
        let e = eval("D/2 + Q").unwrap_err();
        assert_eq!(e.kind, ExprErrorKind::Undefined("Q".into()));
        assert_eq!(e.at, 6..7);
        let e = eval("L / (D - 25)").unwrap_err();
        assert_eq!(e.kind, ExprErrorKind::DivisionByZero);
        assert_eq!(e.at, 4..12);
        assert_eq!(
            eval("1/zero").unwrap_err().kind,
            ExprErrorKind::DivisionByZero
        );
        assert_eq!(eval("sqrt(-1)").unwrap_err().kind, ExprErrorKind::NotFinite);
        for bad in [
            "", "1 +", "(1", "1 2", "min(1)", "foo(1)", "sqrt", "2 $ 3", "1..2",
        ] {
            assert_eq!(eval(bad).unwrap_err().kind, ExprErrorKind::Syntax, "{bad}");
        }
    }

    #[test]
    fn names_lists_parameters_once() {
        let e = Expr::parse("D + L*D - pi").unwrap();
        let names: Vec<String> = e.names().into_iter().map(|n| n.0).collect();
        assert_eq!(names, ["D", "L"]);
    }
}
