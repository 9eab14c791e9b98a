//! A document that cannot be read, told in plain words.
//!
//! The JSON reader and the document types say what went wrong in the terms of their code
//! (`invalid type: floating point \`2.5\`, expected u32`, `expected value at line 1 column 34`,
//! `trailing characters`). A designer who typed a design, or a colleague who edited one, needs
//! what is expected instead: `must be a whole number, got 2.5`, `NaN is not a number JSON
//! allows: give a number`, `has more text after the end of the document`. [`plain`] rewrites
//! every message of that kind we know; a message it does not know is kept as it is.

/// Where reading stopped in a document's text, and why, in plain words: the reader's message
/// rewritten by [`plain`], with the line and column when the text has more than one line (and
/// the column alone for a one-line document). The character where reading stopped tells
/// apart a few cases the reader words alike (`NaN`, a `null`, an empty `{}`, two choices).
pub fn plain_json(error: &serde_json::Error, text: &str, key: Option<&str>) -> String {
    let message = error.to_string();
    // serde_json appends " at line L column C" to every message with a place.
    let bare = match message.rfind(" at line ") {
        Some(i) if error.line() > 0 => &message[..i],
        _ => message.as_str(),
    };
    let said = match (bare, stopped_at(text, error.line(), error.column())) {
        ("expected value", Some((before, rest))) => expected_value(before, rest),
        ("expected ident" | "invalid number", Some((before, rest)))
            if starts_like_not_a_number(rest) || before.ends_with('-') =>
        {
            not_a_number(before, rest)
        }
        _ => plain(bare, key),
    };
    if error.line() == 0 {
        said
    } else if text.lines().nth(1).is_some() {
        format!("{said} (line {}, column {})", error.line(), error.column())
    } else {
        format!("{said} (character {})", error.column())
    }
}

/// The line's text before and from where the reader stopped: serde_json counts lines from 1
/// and columns (in bytes, from 1) to the character it stopped at, or to the last one it took.
fn stopped_at(text: &str, line: usize, column: usize) -> Option<(&str, &str)> {
    let line_text = text.split('\n').nth(line.checked_sub(1)?)?;
    let from = column.saturating_sub(1).min(line_text.len());
    let start = (0..=from).rev().find(|&i| line_text.is_char_boundary(i))?;
    Some(line_text.split_at(start))
}

fn starts_like_not_a_number(rest: &str) -> bool {
    let t = rest.trim_start().trim_start_matches('-');
    ["NaN", "nan", "Infinity", "inf", "Inf"]
        .iter()
        .any(|w| t.starts_with(w))
}

fn not_a_number(before: &str, rest: &str) -> String {
    let sign = if before.ends_with('-') { "-" } else { "" };
    let word: String = rest
        .trim_start()
        .chars()
        .take_while(|c| c.is_ascii_alphanumeric() || *c == '-')
        .collect();
    format!("{sign}{word} is not a number JSON allows (neither NaN nor Infinity is): give a number")
}

/// `expected value`: the reader found no value where one must be. What it found instead, and
/// just before, say which mistake it is.
fn expected_value(before: &str, rest: &str) -> String {
    let t = rest.trim_start();
    let first = t.chars().next();
    // The reader stops on the last character it took: what follows it counts too.
    let next = t.get(1..).unwrap_or("").trim_start();
    let just_before = before.trim_end().chars().next_back();
    if starts_like_not_a_number(t) {
        not_a_number(before, t)
    } else if t.starts_with("null") {
        "must be given (null is not allowed here): give a value or leave the field out".to_string()
    } else if first == Some('}') && (just_before == Some('{') || next.starts_with('}')) {
        "is empty: give one of its choices with its settings".to_string()
    } else if first != Some(',') && next.starts_with(',') {
        "gives more than one choice: keep only one".to_string()
    } else if first.is_some_and(|c| c.is_alphabetic()) {
        let word: String = t.chars().take_while(|c| c.is_alphanumeric()).collect();
        let lower = word.to_lowercase();
        if ["true", "false", "null"].contains(&lower.as_str()) {
            format!("is not valid JSON here: write {lower}, in lower case")
        } else {
            format!(
                "is not valid JSON here: text must be in double quotes (\"{}\")",
                clip(&word)
            )
        }
    } else {
        "is not valid JSON here: a value was expected (a number, text in quotes, true or \
         false, a list [ … ] or an object { … })"
            .to_string()
    }
}

/// A reader's message without its place, in plain words (`key` is the field being read, when
/// known: it names the choice in `write {"round": { … }}`).
pub fn plain(message: &str, key: Option<&str>) -> String {
    let m = message.strip_prefix("Error: ").unwrap_or(message);
    if let Some(rest) = m.strip_prefix("invalid type: ") {
        if let Some((found, expected)) = rest.split_once(", expected ") {
            if found == "unit variant" {
                let choice = key.unwrap_or("the choice");
                return format!(
                    "needs its settings: write {{\"{choice}\": {{ … }}}}, not \"{choice}\" alone"
                );
            }
            let expected = expected_words(expected);
            if matches!(found, "null" | "unit" | "unit value") {
                return format!("must be {expected}, not null");
            }
            return format!("must be {expected}, got {}", found_words(found));
        }
    }
    if let Some(rest) = m.strip_prefix("invalid value: ") {
        if let Some((found, expected)) = rest.split_once(", expected ") {
            let negative = found.contains("`-");
            let what = expected_words(expected);
            return if negative && what == "a whole number" {
                format!(
                    "must be a whole number, 0 or more, got {}",
                    found_words(found)
                )
            } else {
                format!("must be {what}, got {}", found_words(found))
            };
        }
    }
    if let Some(rest) = m.strip_prefix("invalid length ") {
        if let Some((n, expected)) = rest.split_once(", expected ") {
            let items = if n == "1" { "item" } else { "items" };
            return format!("must be {}, got {n} {items}", expected_words(expected));
        }
    }
    if let Some(rest) = m.strip_prefix("unknown field ") {
        let (name, allowed) = rest.split_once(", ").unwrap_or((rest, ""));
        let name = unquote(name);
        // The path already ends with the unknown name: do not say it twice.
        let subject = if key == Some(name) {
            "is not a field here".to_string()
        } else {
            format!("“{name}” is not a field here")
        };
        return match allowed.strip_prefix("expected one of ") {
            Some(list) => format!("{subject}; the fields here are {}", names(list)),
            None => match allowed.strip_prefix("expected ") {
                Some(one) => format!("{subject}; the field here is {}", names(one)),
                None => format!("{subject} (this part has no fields)"),
            },
        };
    }
    if let Some(rest) = m.strip_prefix("unknown variant ") {
        let (name, allowed) = rest.split_once(", ").unwrap_or((rest, ""));
        let name = unquote(name);
        return match allowed.strip_prefix("expected one of ") {
            Some(list) => format!("“{name}” is not one of the choices here: {}", names(list)),
            None => match allowed.strip_prefix("expected ") {
                Some(one) => format!("“{name}” is not the choice here: {}", names(one)),
                None => format!("“{name}” is not a choice here"),
            },
        };
    }
    if let Some(rest) = m.strip_prefix("missing field ") {
        return format!("needs the field “{}”", unquote(rest));
    }
    if let Some(rest) = m.strip_prefix("duplicate field ") {
        return format!("gives the field “{}” twice", unquote(rest));
    }
    let syntax = [
        ("trailing characters", "has more text after the end of the document"),
        ("trailing comma", "has a comma just before a closing bracket: remove it"),
        ("EOF while parsing", "ends too early: a closing bracket, brace or quote is missing"),
        ("expected `,` or `}`", "is not valid JSON here: a comma or a closing } is missing"),
        ("expected `,` or `]`", "is not valid JSON here: a comma or a closing ] is missing"),
        ("expected `:`", "is not valid JSON here: a colon is missing after a field's name"),
        ("key must be a string", "is not valid JSON here: a field's name must be in double quotes"),
        ("expected ident", "is not valid JSON here: true, false and null are written in lower case"),
        ("expected value", "is not valid JSON here: a value was expected (a number, text in quotes, true or false, a list [ … ] or an object { … })"),
        ("invalid number", "has a badly written number"),
        ("number out of range", "has a number too large for any field"),
        ("control character", "has a control character (a line break or tab) inside quotes: write it as \\n or \\t"),
        ("invalid escape", "has an invalid escape (a \\ inside quotes): write \\\\ for a backslash"),
        ("invalid unicode code point", "has an invalid \\u escape inside quotes"),
        ("lone leading surrogate", "has an invalid \\u escape inside quotes"),
        ("unexpected end of hex escape", "has an invalid \\u escape inside quotes"),
        ("recursion limit exceeded", "is nested too deeply"),
        ("data did not match any variant", "is none of the forms allowed here"),
    ];
    for (start, words) in syntax {
        if m.starts_with(start) {
            return words.to_string();
        }
    }
    m.to_string()
}

/// What a type expects, in words: `f64` → `a number`, `u32` → `a whole number`.
fn expected_words(expected: &str) -> String {
    let e = expected.trim();
    match e {
        "f64" | "f32" | "a number" => "a number".to_string(),
        "u8" | "u16" | "u32" | "u64" | "usize" | "i32" | "i64" | "a whole number" => {
            "a whole number".to_string()
        }
        "a string" | "string" | "a borrowed string" | "char" => "text in quotes".to_string(),
        "a boolean" | "bool" => "true or false".to_string(),
        "a sequence" | "a tuple" => "a list [ … ]".to_string(),
        "a map" | "struct variant" | "newtype variant" | "tuple variant" => {
            "an object { … }".to_string()
        }
        _ => {
            if let Some(n) = e
                .strip_prefix("an array of length ")
                .or_else(|| e.strip_prefix("a tuple of size "))
            {
                format!("a list of {n}")
            } else if e.starts_with("struct ") {
                "an object { … }".to_string()
            } else if e.starts_with("enum ") {
                "one of its choices, written {\"choice\": …}".to_string()
            } else {
                e.to_string()
            }
        }
    }
}

/// What was found, in words: `string "abc"` → `the text “abc”`, `floating point \`2.5\`` → `2.5`.
fn found_words(found: &str) -> String {
    let f = found.trim();
    if let Some(s) = f.strip_prefix("string ") {
        return format!("the text “{}”", clip(s.trim_matches('"')));
    }
    for kind in ["floating point ", "integer ", "boolean "] {
        if let Some(v) = f.strip_prefix(kind) {
            return clip(unquote(v));
        }
    }
    match f {
        "null" | "unit" | "unit value" => "null".to_string(),
        "map" => "an object { … }".to_string(),
        "sequence" => "a list [ … ]".to_string(),
        other => other.to_string(),
    }
}

/// `` `name` `` → `name`.
fn unquote(s: &str) -> &str {
    s.trim().trim_matches('`')
}

/// `` `a`, `b`, `c` `` → `a, b, c`.
fn names(list: &str) -> String {
    list.split(", ").map(unquote).collect::<Vec<_>>().join(", ")
}

/// The field path where reading stopped, as a field to mark: none for a cut-short text, which
/// belongs to the document, not to the field the reader was in; for other broken JSON the
/// field the reader was in, without the not-yet-named one after it (`route[1].bend.?`).
pub fn field_path(path: String, error: &serde_json::Error) -> String {
    use serde_json::error::Category;
    match error.classify() {
        Category::Eof | Category::Io => String::new(),
        Category::Syntax | Category::Data => {
            let named = path.strip_suffix(".?").unwrap_or(&path);
            if named == "?" {
                String::new()
            } else {
                named.to_string()
            }
        }
    }
}

/// A reading problem with its place: `route[1].bend must be …`, or `the document has …` for
/// the document as a whole (an empty path, or serde's `.` and `?`).
pub fn at_path(path: &str, said: &str) -> String {
    if path.is_empty() || path == "." || path == "?" {
        format!("the document {said}")
    } else {
        format!("{path} {said}")
    }
}

/// Why a document could not be read: the field path where reading stopped (empty for the
/// document as a whole) and what went wrong there in plain words, without the path.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Unread {
    /// The field path, or empty.
    pub path: String,
    /// The reason in plain words ([`plain_json`]).
    pub said: String,
}

impl Unread {
    /// The reason with its place: `route[1].bend must be …`, or `the document has …`.
    pub fn sentence(&self) -> String {
        at_path(&self.path, &self.said)
    }
}

/// Read a whole document of type `T` from JSON text, as every reader of a document does: a
/// byte-order mark dropped, a list refused where a document is expected, text after the document
/// refused, and what stops the reader told in plain words at its field path ([`Unread`]).
pub fn read_document<T: serde::de::DeserializeOwned>(text: &str) -> Result<T, Unread> {
    let text = crate::problems::without_bom(text);
    if let Some(said) = list_for_object(text) {
        return Err(Unread {
            path: String::new(),
            said,
        });
    }
    let de = &mut serde_json::Deserializer::from_str(text);
    serde_path_to_error::deserialize(&mut *de)
        .map_err(|e| {
            let path = e.path().to_string();
            let e = e.into_inner();
            (field_path(path, &e), e)
        })
        // Text after the document is refused: the reader alone would stop at its end.
        .and_then(|d| de.end().map(|()| d).map_err(|e| (String::new(), e)))
        .map_err(|(path, e)| {
            let said = plain_json(&e, text, last_key(&path));
            let path = if path == "." || path == "?" {
                String::new()
            } else {
                path
            };
            Unread { path, said }
        })
}

/// Why a document's text is no document, when it is given as a list (`[ … ]`): the reader
/// would take the list's items for the fields in order and complain about one of them.
pub fn list_for_object(text: &str) -> Option<String> {
    text.trim_start()
        .starts_with('[')
        .then(|| "the document must be an object { … }, got a list [ … ]".to_string())
}

/// The last field name of a path (`guide.section.round` → `round`), for [`plain_json`].
pub fn last_key(path: &str) -> Option<&str> {
    let last = path.rsplit('.').next()?;
    let last = last.split('[').next()?;
    (!last.is_empty() && last != "?").then_some(last)
}

/// Text quoted back in a message is cut at 40 characters: a message never spells out a long
/// paste.
fn clip(s: &str) -> String {
    match s.char_indices().nth(40) {
        Some((i, _)) => format!("{}…", &s[..i]),
        None => s.to_string(),
    }
}

/// A whole number field read from any JSON number that is one (`2` or `2.0`: many JSON writers
/// write every number with a decimal point), 0 ≤ n ≤ `max`; anything else is refused with
/// `must be a whole number …`. The field's own range is checked afterwards with the others, so
/// that every problem of a document is listed at once; `max` only keeps the number in its type
/// (a larger one is refused with `rule`, the field's own range in words).
pub fn whole<'de, D: serde::Deserializer<'de>>(
    d: D,
    max: u64,
    rule: &str,
) -> Result<u64, D::Error> {
    struct Whole<'a>(u64, &'a str);
    impl serde::de::Visitor<'_> for Whole<'_> {
        type Value = u64;
        fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
            write!(f, "a whole number")
        }
        fn visit_u64<E: serde::de::Error>(self, n: u64) -> Result<u64, E> {
            if n <= self.0 {
                Ok(n)
            } else {
                Err(E::custom(format!(
                    "{}, got {}",
                    self.1,
                    crate::limits::show_count(n)
                )))
            }
        }
        fn visit_i64<E: serde::de::Error>(self, n: i64) -> Result<u64, E> {
            match u64::try_from(n) {
                Ok(n) => self.visit_u64(n),
                Err(_) => Err(E::custom(format!("{}, got {n}", self.1))),
            }
        }
        fn visit_f64<E: serde::de::Error>(self, x: f64) -> Result<u64, E> {
            // 2⁵³ bounds the whole numbers a double holds exactly.
            if x.is_finite()
                && x.fract() == 0.0
                && (0.0..=crate::limits::MAX_WHOLE as f64).contains(&x)
            {
                self.visit_u64(x as u64)
            } else {
                Err(E::custom(format!(
                    "{}, got {}",
                    self.1,
                    crate::error::show(x)
                )))
            }
        }
    }
    d.deserialize_any(Whole(max, rule))
}
