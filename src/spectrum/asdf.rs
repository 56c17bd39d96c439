//! One data line of a JCAMP-DX table in AFFN or ASDF form.
//!
//! ASDF (McDonald & Wilks, Appl. Spectrosc. 42 (1988) 151, §5 and Table VII):
//! - SQZ: `@`=+0, `A`–`I` = +1…+9, `a`–`i` = −1…−9 replace the first digit and sign;
//! - DIF: `%`=0, `J`–`R` = +1…+9, `j`–`r` = −1…−9 start a difference from the previous ordinate;
//! - DUP: `S`–`Z` = 1…8, `s` = 9 give the total count of the preceding value (or of the
//!   preceding difference, which is then applied again each time);
//! - `?` is a missing value; `+`/`-` start a new number (PAC); blanks, `,`, `;` separate.
//!
//! In AFFN mode (no compression characters anywhere in the table) `E`/`e` after a
//! number is an exponent; in ASDF mode `E`/`e` are the SQZ digits +5/−5.

/// How a line's last ordinate was written; decides the Y checkpoint rule.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LineEnd {
    /// An absolute value (AFFN, SQZ, or DUP of one): the next line starts afresh.
    Absolute,
    /// A DIF value: the next line's first ordinate repeats it as a check.
    Dif,
    /// A DUP of a DIF ("relayed DIF"): writers disagree whether a check follows.
    DupOfDif,
}

/// The values of one line (the abscissa first) and how the line ended.
#[derive(Debug, Clone, PartialEq)]
pub struct DecodedLine {
    pub values: Vec<f64>,
    pub end: LineEnd,
}

/// Most values one line may expand to (DUP counts make tiny lines huge).
pub const MAX_VALUES_PER_LINE: usize = 1_000_000;

#[derive(Debug, Clone, Copy, PartialEq)]
enum Token {
    Abs(f64),
    Dif(f64),
    Dup(usize),
    Missing,
}

/// True if a character appears only in compressed (ASDF) data, `E`/`e` excepted.
pub fn is_asdf_char(c: char) -> bool {
    matches!(c, '@' | 'A'..='D' | 'F'..='I' | 'a'..='d' | 'f'..='i' | '%' | 'J'..='R' | 'j'..='r' | 'S'..='Z' | 's')
}

fn sqz(c: char) -> Option<(char, char)> {
    let (sign, digit) = match c {
        '@' => ('+', 0),
        'A'..='I' => ('+', c as u32 - 'A' as u32 + 1),
        'a'..='i' => ('-', c as u32 - 'a' as u32 + 1),
        _ => return None,
    };
    char::from_digit(digit, 10).map(|d| (sign, d))
}

fn dif(c: char) -> Option<(char, char)> {
    let (sign, digit) = match c {
        '%' => ('+', 0),
        'J'..='R' => ('+', c as u32 - 'J' as u32 + 1),
        'j'..='r' => ('-', c as u32 - 'j' as u32 + 1),
        _ => return None,
    };
    char::from_digit(digit, 10).map(|d| (sign, d))
}

fn dup(c: char) -> Option<char> {
    match c {
        'S'..='Z' => char::from_digit(c as u32 - 'S' as u32 + 1, 10),
        's' => Some('9'),
        _ => None,
    }
}

#[derive(Clone, Copy, PartialEq)]
enum Pending {
    Abs,
    Dif,
    Dup,
}

fn tokenize(line: &str, asdf: bool) -> Result<Vec<Token>, String> {
    let mut tokens = Vec::new();
    let mut buf = String::new();
    let mut kind: Option<Pending> = None;
    let flush = |buf: &mut String,
                 kind: &mut Option<Pending>,
                 tokens: &mut Vec<Token>|
     -> Result<(), String> {
        if let Some(k) = kind.take() {
            let token = match k {
                Pending::Abs => Token::Abs(number(buf)?),
                Pending::Dif => Token::Dif(number(buf)?),
                Pending::Dup => Token::Dup(
                    buf.parse::<usize>()
                        .ok()
                        .filter(|&n| n >= 1)
                        .ok_or_else(|| format!("bad repeat count '{buf}'"))?,
                ),
            };
            tokens.push(token);
        }
        buf.clear();
        Ok(())
    };
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        if c.is_ascii_digit() || c == '.' {
            if kind.is_none() {
                kind = Some(Pending::Abs);
            }
            buf.push(c);
        } else if !asdf && (c == 'E' || c == 'e') && kind == Some(Pending::Abs) && !buf.is_empty() {
            buf.push('e');
            if let Some(&s) = chars.peek() {
                if s == '+' || s == '-' {
                    buf.push(s);
                    chars.next();
                }
            }
        } else if c == '+' || c == '-' {
            flush(&mut buf, &mut kind, &mut tokens)?;
            kind = Some(Pending::Abs);
            buf.push(c);
        } else if let Some((sign, digit)) = sqz(c) {
            flush(&mut buf, &mut kind, &mut tokens)?;
            kind = Some(Pending::Abs);
            buf.push(sign);
            buf.push(digit);
        } else if let Some((sign, digit)) = dif(c) {
            flush(&mut buf, &mut kind, &mut tokens)?;
            kind = Some(Pending::Dif);
            buf.push(sign);
            buf.push(digit);
        } else if let Some(digit) = dup(c) {
            flush(&mut buf, &mut kind, &mut tokens)?;
            kind = Some(Pending::Dup);
            buf.push(digit);
        } else if c == '?' {
            flush(&mut buf, &mut kind, &mut tokens)?;
            tokens.push(Token::Missing);
        } else if c.is_whitespace() || c == ',' || c == ';' {
            flush(&mut buf, &mut kind, &mut tokens)?;
        } else {
            return Err(format!("unexpected character '{c}' in the data"));
        }
    }
    flush(&mut buf, &mut kind, &mut tokens)?;
    Ok(tokens)
}

fn number(text: &str) -> Result<f64, String> {
    text.parse::<f64>()
        .ok()
        .filter(|v| v.is_finite())
        .ok_or_else(|| format!("'{text}' is not a number"))
}

/// Decodes one line; `asdf` selects whether `E`/`e` are SQZ digits.
pub fn decode_line(line: &str, asdf: bool) -> Result<DecodedLine, String> {
    let mut values: Vec<f64> = Vec::new();
    let mut previous: Option<Token> = None;
    let mut end = LineEnd::Absolute;
    for token in tokenize(line, asdf)? {
        match token {
            Token::Abs(v) => {
                values.push(v);
                end = LineEnd::Absolute;
            }
            Token::Missing => {
                values.push(f64::NAN);
                end = LineEnd::Absolute;
            }
            Token::Dif(d) => {
                let last = match values.last() {
                    Some(&v) if values.len() >= 2 && v.is_finite() => v,
                    _ => return Err("a difference (DIF) value has no ordinate before it".into()),
                };
                values.push(last + d);
                end = LineEnd::Dif;
            }
            Token::Dup(n) => {
                let Some(prev) = previous else {
                    return Err("a repeat (DUP) count has no value before it".into());
                };
                if values.len().saturating_add(n) > MAX_VALUES_PER_LINE {
                    return Err(format!(
                        "a repeat (DUP) count of {n} makes the line longer than {MAX_VALUES_PER_LINE} values"
                    ));
                }
                for _ in 1..n {
                    let last = values.last().copied().unwrap_or(f64::NAN);
                    match prev {
                        Token::Dif(d) => values.push(last + d),
                        Token::Dup(_) => return Err("two repeat (DUP) counts in a row".into()),
                        _ => values.push(last),
                    }
                }
                if matches!(prev, Token::Dif(_)) {
                    end = LineEnd::DupOfDif;
                }
            }
        }
        previous = Some(token);
    }
    Ok(DecodedLine { values, end })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn values(line: &str) -> Vec<f64> {
        decode_line(line, true).unwrap().values
    }

    #[test]
    fn sqz_dif_dup_by_hand() {
        // Hand-made after the 1988 spec's Table VII: 1000 = SQZ 'A000'; J = +1, k = −2; T = 2 occurrences.
        assert_eq!(values("450A000B000"), [450.0, 1000.0, 2000.0]);
        assert_eq!(
            values("450A000JK%k"),
            [450.0, 1000.0, 1001.0, 1003.0, 1003.0, 1001.0]
        );
        assert_eq!(values("450A000T"), [450.0, 1000.0, 1000.0]);
        // DUP of a DIF repeats the difference: A0 J U → 10, 11, 12, 13 (U = 3 occurrences of +1).
        let relayed = decode_line("1A0JU", true).unwrap();
        assert_eq!(relayed.values, [1.0, 10.0, 11.0, 12.0, 13.0]);
        assert_eq!(relayed.end, LineEnd::DupOfDif);
        assert_eq!(decode_line("1A0J", true).unwrap().end, LineEnd::Dif);
        assert_eq!(decode_line("1A0JA", true).unwrap().end, LineEnd::Absolute);
        // SQZ negative and a decimal in a DIF.
        // J0.5 is +10.5.
        assert_eq!(values("5a5J0.5"), [5.0, -15.0, -4.5]);
        let missing = values("5 ? 3");
        assert_eq!((missing[0], missing[2]), (5.0, 3.0));
        assert!(missing[1].is_nan());
    }

    #[test]
    fn affn_exponents_and_pac_signs() {
        assert_eq!(
            decode_line("1.5E+02 2e-1,3", false).unwrap().values,
            [150.0, 0.2, 3.0]
        );
        assert_eq!(
            decode_line("100+5-3", false).unwrap().values,
            [100.0, 5.0, -3.0]
        );
        // In ASDF mode E is SQZ +5: 'E12' = 512.
        assert_eq!(values("1E12"), [1.0, 512.0]);
    }

    #[test]
    fn broken_tokens_are_errors_not_panics() {
        assert!(decode_line("450J5", true).is_err(), "DIF right after X");
        assert!(decode_line("450A1TT", true).is_err(), "DUP after DUP");
        assert!(decode_line("450A1#", true).is_err());
        assert!(decode_line("S", true).is_err());
        assert!(
            decode_line("1A1s999999999999", true).is_err(),
            "absurd repeat count"
        );
    }
}
