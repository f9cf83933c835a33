//! Arithmetic expressions in aperture macro bodies (Gerber spec rev 2024.05, §4.5, "arithmetic expressions").
//!
//! Grammar (whitespace has already been removed by the caller):
//!
//! ```text
//! expression := term { ("+" | "-") term }
//! term       := unary { ("x" | "X" | "/") unary }
//! unary      := ("+" | "-") unary | primary
//! primary    := number | "$" digits | "(" expression ")"
//! number     := digits ["." digits] | "." digits      (no exponent: Gerber decimals have none)
//! ```
//!
//! `x` and `/` bind tighter than `+` and `-`; binary operators are left associative; unary
//! signs bind tightest, so `-2x-3` is 6. The spec writes multiplication as a lower-case `x`;
//! the upper-case `X` is accepted too because intent is unambiguous.
//!
//! Expressions are compiled to reverse Polish notation and evaluated with an explicit stack,
//! so a long chain like `1+1+…+1` cannot overflow the call stack. The only recursion is for
//! parentheses and unary signs, capped at [`MAX_NESTING`] levels.

use crate::diag::Pos;
use std::collections::BTreeMap;

/// Deepest nesting of parentheses and unary signs accepted. Real macros use two or three
/// levels; the cap keeps hostile input from overflowing the parser's stack.
pub(super) const MAX_NESTING: usize = 64;

/// Characters of a block with whitespace removed, each with its position in the file.
pub(super) type Located = [(char, Pos)];

/// A compiled expression.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Expr {
    ops: Vec<Op>,
    /// The source text (whitespace removed), for messages.
    pub text: String,
    /// Position of the first character.
    pub pos: Pos,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Op {
    Number(f64),
    Variable(u32, Pos),
    Negate,
    Add,
    Subtract,
    Multiply,
    /// Carries the position of the `/` for the division-by-zero message.
    Divide(Pos),
}

/// A problem in the text of an expression.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct SyntaxError {
    pub pos: Pos,
    pub message: String,
}

/// A problem while evaluating an expression.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum EvalError {
    /// Division by zero; the position of the `/`.
    DivisionByZero(Pos),
}

/// Values of the macro variables `$1`, `$2`, ...
#[derive(Debug, Clone, Default)]
pub(super) struct Variables {
    values: BTreeMap<u32, f64>,
}

impl Variables {
    /// `$1` .. `$n` from the parameters of the aperture definition (spec §4.5, "variables").
    pub fn from_params(params: &[f64]) -> Variables {
        let values = params
            .iter()
            .enumerate()
            .filter_map(|(i, &v)| u32::try_from(i + 1).ok().map(|n| (n, v)))
            .collect();
        Variables { values }
    }

    pub fn set(&mut self, number: u32, value: f64) {
        self.values.insert(number, value);
    }

    pub fn get(&self, number: u32) -> Option<f64> {
        self.values.get(&number).copied()
    }
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Token {
    Number(f64),
    Variable(u32),
    Plus,
    Minus,
    Times,
    Slash,
    Open,
    Close,
}

fn describe(t: Token) -> String {
    match t {
        Token::Number(v) => format!("the number {v}"),
        Token::Variable(n) => format!("the variable ${n}"),
        Token::Plus => "'+'".into(),
        Token::Minus => "'-'".into(),
        Token::Times => "'x'".into(),
        Token::Slash => "'/'".into(),
        Token::Open => "'('".into(),
        Token::Close => "')'".into(),
    }
}

/// Parses a variable number (the digits after `$`). Variables are numbered from 1.
pub(super) fn variable_number(digits: &str, pos: Pos) -> Result<u32, SyntaxError> {
    if digits.is_empty() || !digits.bytes().all(|b| b.is_ascii_digit()) {
        return Err(SyntaxError {
            pos,
            message: "'$' must be followed by a variable number, like $1".into(),
        });
    }
    match digits.parse::<u32>() {
        Ok(0) => Err(SyntaxError {
            pos,
            message: "there is no variable $0: macro variables are numbered from $1".into(),
        }),
        Ok(n) => Ok(n),
        Err(_) => Err(SyntaxError {
            pos,
            message: format!("the variable number ${digits} is too large"),
        }),
    }
}

fn tokenize(src: &Located) -> Result<Vec<(Token, Pos)>, SyntaxError> {
    let mut out = Vec::new();
    let mut i = 0;
    while i < src.len() {
        let (c, pos) = src[i];
        let single = match c {
            '+' => Some(Token::Plus),
            '-' => Some(Token::Minus),
            'x' | 'X' => Some(Token::Times),
            '/' => Some(Token::Slash),
            '(' => Some(Token::Open),
            ')' => Some(Token::Close),
            _ => None,
        };
        if let Some(t) = single {
            out.push((t, pos));
            i += 1;
            continue;
        }
        if c.is_ascii_digit() || c == '.' {
            let start = i;
            while i < src.len() && (src[i].0.is_ascii_digit() || src[i].0 == '.') {
                i += 1;
            }
            let text: String = src[start..i].iter().map(|&(c, _)| c).collect();
            let digits = text.bytes().filter(u8::is_ascii_digit).count();
            let dots = text.len() - digits;
            if digits == 0 || dots > 1 {
                return Err(SyntaxError {
                    pos,
                    message: format!("'{text}' is not a decimal number"),
                });
            }
            let value = text.parse::<f64>().map_err(|_| SyntaxError {
                pos,
                message: format!("'{text}' is not a decimal number"),
            })?;
            if !value.is_finite() {
                return Err(SyntaxError {
                    pos,
                    message: format!("the number '{text}' is too large"),
                });
            }
            out.push((Token::Number(value), pos));
            continue;
        }
        if c == '$' {
            let start = i + 1;
            i = start;
            while i < src.len() && src[i].0.is_ascii_digit() {
                i += 1;
            }
            let digits: String = src[start..i].iter().map(|&(c, _)| c).collect();
            out.push((Token::Variable(variable_number(&digits, pos)?), pos));
            continue;
        }
        return Err(SyntaxError {
            pos,
            message: format!(
                "unexpected character '{}' in an arithmetic expression (allowed: numbers, \
                 $n variables, + - x / and parentheses)",
                c.escape_default()
            ),
        });
    }
    Ok(out)
}

struct Parser<'a> {
    tokens: &'a [(Token, Pos)],
    next: usize,
    depth: usize,
    ops: Vec<Op>,
    /// Where to point when the expression ends too early.
    end: Pos,
}

impl Parser<'_> {
    fn peek(&self) -> Option<(Token, Pos)> {
        self.tokens.get(self.next).copied()
    }

    fn expression(&mut self) -> Result<(), SyntaxError> {
        self.term()?;
        while let Some((t @ (Token::Plus | Token::Minus), _)) = self.peek() {
            self.next += 1;
            self.term()?;
            self.ops.push(if t == Token::Plus {
                Op::Add
            } else {
                Op::Subtract
            });
        }
        Ok(())
    }

    fn term(&mut self) -> Result<(), SyntaxError> {
        self.unary()?;
        while let Some((t @ (Token::Times | Token::Slash), pos)) = self.peek() {
            self.next += 1;
            self.unary()?;
            self.ops.push(if t == Token::Times {
                Op::Multiply
            } else {
                Op::Divide(pos)
            });
        }
        Ok(())
    }

    fn nested(
        &mut self,
        pos: Pos,
        inner: fn(&mut Self) -> Result<(), SyntaxError>,
    ) -> Result<(), SyntaxError> {
        self.depth += 1;
        if self.depth > MAX_NESTING {
            return Err(SyntaxError {
                pos,
                message: format!(
                    "the expression is nested more than {MAX_NESTING} levels deep \
                     (parentheses and signs)"
                ),
            });
        }
        inner(self)?;
        self.depth -= 1;
        Ok(())
    }

    fn unary(&mut self) -> Result<(), SyntaxError> {
        match self.peek() {
            Some((Token::Plus, pos)) => {
                self.next += 1;
                self.nested(pos, Self::unary)
            }
            Some((Token::Minus, pos)) => {
                self.next += 1;
                self.nested(pos, Self::unary)?;
                self.ops.push(Op::Negate);
                Ok(())
            }
            _ => self.primary(),
        }
    }

    fn primary(&mut self) -> Result<(), SyntaxError> {
        match self.peek() {
            Some((Token::Number(v), _)) => {
                self.next += 1;
                self.ops.push(Op::Number(v));
                Ok(())
            }
            Some((Token::Variable(n), pos)) => {
                self.next += 1;
                self.ops.push(Op::Variable(n, pos));
                Ok(())
            }
            Some((Token::Open, pos)) => {
                self.next += 1;
                self.nested(pos, Self::expression)?;
                match self.peek() {
                    Some((Token::Close, _)) => {
                        self.next += 1;
                        Ok(())
                    }
                    Some((t, at)) => Err(SyntaxError {
                        pos: at,
                        message: format!(
                            "expected ')' to close the '(' at {pos}, found {}",
                            describe(t)
                        ),
                    }),
                    None => Err(SyntaxError {
                        pos,
                        message: "this '(' is never closed".into(),
                    }),
                }
            }
            Some((t, pos)) => Err(SyntaxError {
                pos,
                message: format!(
                    "expected a number, a variable or '(', found {}",
                    describe(t)
                ),
            }),
            None => Err(SyntaxError {
                pos: self.end,
                message: "the expression ends where a number, a variable or '(' is expected".into(),
            }),
        }
    }
}

impl Expr {
    /// Compiles `src`. `end` is the position to report when `src` is empty or ends early
    /// (typically the position of the following comma or the block's end).
    pub fn parse(src: &Located, end: Pos) -> Result<Expr, SyntaxError> {
        let tokens = tokenize(src)?;
        let mut p = Parser {
            tokens: &tokens,
            next: 0,
            depth: 0,
            ops: Vec::new(),
            end,
        };
        p.expression()?;
        if let Some((t, pos)) = p.peek() {
            return Err(SyntaxError {
                pos,
                message: format!("unexpected {} after a complete expression", describe(t)),
            });
        }
        Ok(Expr {
            ops: p.ops,
            text: src.iter().map(|&(c, _)| c).collect(),
            pos: src.first().map(|&(_, p)| p).unwrap_or(end),
        })
    }

    /// Evaluates with `vars`. A variable without a value counts as 0 and is recorded in
    /// `unset` (with its position) so the caller can warn.
    pub fn eval(&self, vars: &Variables, unset: &mut Vec<(u32, Pos)>) -> Result<f64, EvalError> {
        let mut stack: Vec<f64> = Vec::with_capacity(8);
        for op in &self.ops {
            let value = match *op {
                Op::Number(v) => v,
                Op::Variable(n, pos) => vars.get(n).unwrap_or_else(|| {
                    unset.push((n, pos));
                    0.0
                }),
                Op::Negate => -pop(&mut stack),
                Op::Add | Op::Subtract | Op::Multiply | Op::Divide(_) => {
                    let b = pop(&mut stack);
                    let a = pop(&mut stack);
                    match *op {
                        Op::Add => a + b,
                        Op::Subtract => a - b,
                        Op::Multiply => a * b,
                        Op::Divide(pos) => {
                            if b == 0.0 {
                                return Err(EvalError::DivisionByZero(pos));
                            }
                            a / b
                        }
                        _ => unreachable!("matched above"),
                    }
                }
            };
            stack.push(value);
        }
        Ok(pop(&mut stack))
    }
}

/// The compiler only emits well-formed RPN, so the stack never runs dry; NaN instead of a
/// panic keeps that an ordinary (reported) non-finite result should it ever happen.
fn pop(stack: &mut Vec<f64>) -> f64 {
    stack.pop().unwrap_or(f64::NAN)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn located(s: &str) -> Vec<(char, Pos)> {
        s.chars()
            .enumerate()
            .map(|(i, c)| (c, Pos::new(1, i as u32 + 1)))
            .collect()
    }

    fn eval_with(s: &str, params: &[f64]) -> f64 {
        let e = Expr::parse(&located(s), Pos::new(1, 99)).unwrap();
        let mut unset = Vec::new();
        let v = e.eval(&Variables::from_params(params), &mut unset).unwrap();
        assert!(unset.is_empty(), "{s}: unset {unset:?}");
        v
    }

    fn syntax_error(s: &str) -> SyntaxError {
        Expr::parse(&located(s), Pos::new(1, 99)).unwrap_err()
    }

    #[test]
    fn precedence_and_associativity() {
        // Spec rev 2024.05 §4.5 (arithmetic expressions): standard precedence, x and / before + and -.
        assert_eq!(eval_with("1+2x3", &[]), 7.0);
        assert_eq!(eval_with("(1+2)x3", &[]), 9.0);
        assert_eq!(eval_with("-2x-3", &[]), 6.0);
        assert_eq!(eval_with("10/4", &[]), 2.5);
        // Left associativity (common practice in arithmetic): (8-3)-2 and (8/4)/2.
        assert_eq!(eval_with("8-3-2", &[]), 3.0);
        assert_eq!(eval_with("8/4/2", &[]), 1.0);
        assert_eq!(eval_with("2X3", &[]), 6.0);
        assert_eq!(eval_with("+.5", &[]), 0.5);
        assert_eq!(eval_with("1.", &[]), 1.0);
        assert_eq!(eval_with("--1", &[]), 1.0);
        assert_eq!(eval_with("$1x$2", &[3.0, 4.0]), 12.0);
        assert_eq!(eval_with("$2-$1/2", &[3.0, 4.0]), 2.5);
    }

    #[test]
    fn long_chains_do_not_recurse() {
        // 100,000 terms: left-deep, evaluated iteratively.
        let s = vec!["1"; 100_000].join("+");
        assert_eq!(eval_with(&s, &[]), 100_000.0);
    }

    #[test]
    fn nesting_is_capped() {
        let ok = format!("{}1{}", "(".repeat(MAX_NESTING), ")".repeat(MAX_NESTING));
        assert_eq!(eval_with(&ok, &[]), 1.0);
        let deep = format!(
            "{}1{}",
            "(".repeat(MAX_NESTING + 1),
            ")".repeat(MAX_NESTING + 1)
        );
        assert!(syntax_error(&deep).message.contains("nested"));
        let signs = format!("{}1", "-".repeat(10_000));
        assert!(syntax_error(&signs).message.contains("nested"));
    }

    #[test]
    fn syntax_errors_point_at_the_problem() {
        assert_eq!(syntax_error("1+").pos, Pos::new(1, 99));
        assert_eq!(syntax_error("1+*").pos, Pos::new(1, 3));
        assert_eq!(syntax_error("(1+2").pos, Pos::new(1, 1));
        assert_eq!(syntax_error("1.2.3").pos, Pos::new(1, 1));
        assert_eq!(syntax_error("1e5").pos, Pos::new(1, 2));
        assert_eq!(syntax_error("(1)(2)").pos, Pos::new(1, 4));
        assert!(syntax_error("$0").message.contains("$1"));
        assert!(syntax_error("$99999999999").message.contains("too large"));
        assert!(syntax_error("$").message.contains("variable number"));
        assert!(syntax_error("").message.contains("ends"));
    }

    #[test]
    fn division_by_zero_names_the_operator() {
        let e = Expr::parse(&located("$1/($2-2)"), Pos::new(1, 99)).unwrap();
        let r = e.eval(&Variables::from_params(&[1.0, 2.0]), &mut Vec::new());
        assert_eq!(r, Err(EvalError::DivisionByZero(Pos::new(1, 3))));
    }

    #[test]
    fn unset_variables_read_as_zero_and_are_reported() {
        let e = Expr::parse(&located("$3+1"), Pos::new(1, 99)).unwrap();
        let mut unset = Vec::new();
        assert_eq!(e.eval(&Variables::from_params(&[5.0]), &mut unset), Ok(1.0));
        assert_eq!(unset, vec![(3, Pos::new(1, 1))]);
    }
}
