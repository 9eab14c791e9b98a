//! Field paths in the core's syntax (`route[1].bend.radius_mm`, `source.offset_mm[0]`): reading
//! one, and setting the number it names inside a document held as a [`serde_json::Value`].
//!
//! Grammar: a name (`a`–`z`, `0`–`9`, `_`), then any number of `[index]` or `[*]`, then
//! optionally `.` and another such step. This is the syntax every problem of the scenario names
//! its field in, so a path copied from a message (or from the form's `data-path`) can be varied.
//! `[*]` stands for every element of a list in which the rest of the path names something:
//! `route[*].bend.radius_mm` names the radius of every bend of the route (the straights, which
//! have no `bend`, are passed over).

use serde_json::Value;

/// One step of a field path: a member of an object or an element of an array.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Step {
    /// `.name`
    Key(String),
    /// `[index]`
    Index(usize),
    /// `[*]`: every element in which the rest of the path names something.
    Every,
}

/// A parsed field path.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FieldPath {
    /// The path as written.
    pub text: String,
    /// Its steps, from the document's top.
    pub steps: Vec<Step>,
}

impl FieldPath {
    /// Read a path; the error says what is wrong with it, for people (without the field name).
    pub fn parse(text: &str) -> Result<FieldPath, String> {
        let mut steps = Vec::new();
        for (k, part) in text.split('.').enumerate() {
            let (name, mut rest) = part.split_at(part.find('[').unwrap_or(part.len()));
            let is_name_char = |c: char| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_';
            if name.is_empty() || !name.chars().all(is_name_char) {
                return Err(format!(
                    "must be a field path such as route[1].bend.radius_mm (names of a–z, 0–9 \
                     and _, joined by '.', each optionally followed by [index]); part {} is \
                     \"{part}\"",
                    k + 1
                ));
            }
            steps.push(Step::Key(name.to_string()));
            while !rest.is_empty() {
                if let Some(after) = rest.strip_prefix("[*]") {
                    steps.push(Step::Every);
                    rest = after;
                    continue;
                }
                let index = rest
                    .strip_prefix('[')
                    .and_then(|r| r.split_once(']'))
                    .and_then(|(digits, after)| {
                        let ok = !digits.is_empty() && digits.chars().all(|c| c.is_ascii_digit());
                        ok.then(|| digits.parse::<usize>().ok().map(|i| (i, after)))
                            .flatten()
                    });
                match index {
                    Some((i, after)) => {
                        steps.push(Step::Index(i));
                        rest = after;
                    }
                    None => {
                        return Err(format!(
                            "must be a field path such as source.offset_mm[0]: an index is a \
                             whole number or * in brackets; part {} is \"{part}\"",
                            k + 1
                        ))
                    }
                }
            }
        }
        Ok(FieldPath {
            text: text.to_string(),
            steps,
        })
    }

    /// The first name of the path (`route`, `source`, `trace`).
    pub fn top(&self) -> &str {
        match self.steps.first() {
            Some(Step::Key(k)) => k,
            _ => "",
        }
    }

    /// Whether the path holds a `[*]`.
    pub fn is_every(&self) -> bool {
        self.steps.contains(&Step::Every)
    }

    /// The paths without `[*]` that this path names in `doc`: itself when it has no `[*]` (and
    /// names something), else one per element where the rest of the path names something, in
    /// document order. Fails, for people, when it names nothing.
    pub fn expand(&self, doc: &Value) -> Result<Vec<FieldPath>, String> {
        let Some(at) = self.steps.iter().position(|s| *s == Step::Every) else {
            self.find(doc)?;
            return Ok(vec![self.clone()]);
        };
        let head = FieldPath {
            text: String::new(),
            steps: self.steps[..at].to_vec(),
        };
        let list = if at == 0 { doc } else { head.find(doc)? };
        let Some(elements) = list.as_array() else {
            return Err(format!(
                "names nothing in the scenario: [*] needs a list, and {} is {}",
                head.written(),
                kind(list)
            ));
        };
        let mut out = Vec::new();
        for i in 0..elements.len() {
            let mut steps = self.steps.clone();
            steps[at] = Step::Index(i);
            let one = FieldPath {
                text: String::new(),
                steps,
            };
            // An element where the rest names nothing is passed over; a deeper [*] expands too.
            if let Ok(mut found) = one.expand(doc) {
                out.append(&mut found);
            }
        }
        if out.is_empty() {
            return Err(format!(
                "names nothing in the scenario: no element of {} has {}",
                head.written(),
                FieldPath {
                    text: String::new(),
                    steps: self.steps[at + 1..].to_vec()
                }
                .written()
                .trim_start_matches('.')
            ));
        }
        for p in &mut out {
            p.text = p.written();
        }
        Ok(out)
    }

    /// The path in the syntax of the messages, from its steps.
    fn written(&self) -> String {
        let mut out = String::new();
        for step in &self.steps {
            match step {
                Step::Key(k) if out.is_empty() => out.push_str(k),
                Step::Key(k) => {
                    out.push('.');
                    out.push_str(k);
                }
                Step::Index(i) => out.push_str(&format!("[{i}]")),
                Step::Every => out.push_str("[*]"),
            }
        }
        out
    }

    /// The text this path names in `doc`, or what the path names instead, for people.
    pub fn text_in<'v>(&self, doc: &'v Value) -> Result<&'v str, String> {
        let v = self.find(doc)?;
        v.as_str()
            .ok_or_else(|| format!("names {} in the scenario, not a text", kind(v)))
    }

    /// Set the text this path names in `doc` to `text`. The path must already name a text
    /// there ([`FieldPath::text_in`]).
    pub fn set_text(&self, doc: &mut Value, text: &str) -> Result<(), String> {
        self.text_in(doc)?;
        *self.find_mut(doc)? = Value::String(text.to_string());
        Ok(())
    }

    /// The number this path names in `doc`, or what the path names instead, for people.
    pub fn number_in(&self, doc: &Value) -> Result<f64, String> {
        let v = self.find(doc)?;
        v.as_f64()
            .ok_or_else(|| format!("names {} in the scenario, not a number", kind(v)))
    }

    /// Set the number this path names in `doc` to `x` (a finite number). The path must already
    /// name a number there ([`FieldPath::number_in`]).
    pub fn set_number(&self, doc: &mut Value, x: f64) -> Result<(), String> {
        self.number_in(doc)?;
        let number = serde_json::Number::from_f64(x)
            .ok_or_else(|| format!("cannot be set to {x} (not a finite number)"))?;
        *self.find_mut(doc)? = Value::Number(number);
        Ok(())
    }

    /// The value the path names, to change it (after [`FieldPath::find`] succeeded).
    fn find_mut<'v>(&self, doc: &'v mut Value) -> Result<&'v mut Value, String> {
        let mut v = doc;
        for step in &self.steps {
            v = match step {
                Step::Key(k) => v.get_mut(k.as_str()),
                Step::Index(i) => v.get_mut(*i),
                Step::Every => None,
            }
            .ok_or_else(|| "names nothing in the scenario".to_string())?;
        }
        Ok(v)
    }

    /// The value the path names, or where it stops naming anything (with what is there).
    fn find<'v>(&self, doc: &'v Value) -> Result<&'v Value, String> {
        let mut v = doc;
        let mut reached = String::new();
        for step in &self.steps {
            let next = match step {
                Step::Key(k) => v.get(k.as_str()),
                Step::Index(i) => v.get(*i),
                Step::Every => {
                    return Err(format!(
                        "names several values ([*]); {} is used where one is needed",
                        self.written()
                    ))
                }
            };
            let here = if reached.is_empty() {
                "the scenario".to_string()
            } else {
                reached.clone()
            };
            match (step, next) {
                (_, Some(n)) => v = n,
                (Step::Key(k), None) => {
                    return Err(match v.as_object() {
                        Some(o) => format!(
                            "names nothing in the scenario: {here} has no \"{k}\" (it has {})",
                            o.keys()
                                .map(|k| format!("\"{k}\""))
                                .collect::<Vec<_>>()
                                .join(", ")
                        ),
                        None => format!(
                            "names nothing in the scenario: {here} is {}, it has no \"{k}\"",
                            kind(v)
                        ),
                    })
                }
                // Refused above: `[*]` names no single value.
                (Step::Every, None) => return Err("names several values ([*])".to_string()),
                (Step::Index(i), None) => {
                    return Err(match v.as_array() {
                        Some(a) => format!(
                            "names nothing in the scenario: {here} has {} element(s), \
                             numbered from 0, so there is no [{i}]",
                            a.len()
                        ),
                        None => format!(
                            "names nothing in the scenario: {here} is {}, not a list",
                            kind(v)
                        ),
                    })
                }
            }
            match step {
                Step::Key(k) if reached.is_empty() => reached = k.clone(),
                Step::Key(k) => reached = format!("{reached}.{k}"),
                Step::Index(i) => reached = format!("{reached}[{i}]"),
                Step::Every => {}
            }
        }
        Ok(v)
    }
}

/// What a JSON value is, for a message.
fn kind(v: &Value) -> &'static str {
    match v {
        Value::Null => "nothing (null)",
        Value::Bool(_) => "a true/false value",
        Value::Number(_) => "a number",
        Value::String(_) => "a text",
        Value::Array(_) => "a list",
        Value::Object(_) => "a group of fields",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_are_read_in_the_syntax_of_the_messages() {
        let p = FieldPath::parse("route[1].bend.radius_mm").unwrap();
        assert_eq!(
            p.steps,
            vec![
                Step::Key("route".into()),
                Step::Index(1),
                Step::Key("bend".into()),
                Step::Key("radius_mm".into())
            ]
        );
        let p = FieldPath::parse("source.offset_mm[0]").unwrap();
        assert_eq!(p.steps.last(), Some(&Step::Index(0)));
        for bad in [
            "",
            "route..bend",
            "route[x]",
            "route[1",
            "Route",
            "a[]",
            ".a",
            "a b",
            "a[*",
            "a[**]",
        ] {
            assert!(FieldPath::parse(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn a_number_is_set_only_where_one_is() {
        let mut doc: Value =
            serde_json::from_str(r#"{"route":[{"straight":{"length_mm":2}}],"name":"x"}"#).unwrap();
        let p = FieldPath::parse("route[0].straight.length_mm").unwrap();
        p.set_number(&mut doc, 3.5).unwrap();
        assert_eq!(p.number_in(&doc), Ok(3.5));
        let e = FieldPath::parse("route[0].bend.radius_mm")
            .unwrap()
            .set_number(&mut doc, 1.0)
            .unwrap_err();
        assert!(
            e.contains("route[0] has no \"bend\"") && e.contains("\"straight\""),
            "{e}"
        );
        let e = FieldPath::parse("route[3]")
            .unwrap()
            .number_in(&doc)
            .unwrap_err();
        assert!(e.contains("1 element(s)"), "{e}");
        let e = FieldPath::parse("name")
            .unwrap()
            .number_in(&doc)
            .unwrap_err();
        assert!(e.contains("not a number"), "{e}");
    }

    #[test]
    fn every_element_is_named_where_the_rest_of_the_path_is() {
        let doc: Value = serde_json::from_str(
            r#"{"route":[{"straight":{"length_mm":2}},{"bend":{"radius_mm":6}},
                {"straight":{"length_mm":3}},{"bend":{"radius_mm":9}}],
                "guide":{"material":{"library":"pmma"}}}"#,
        )
        .unwrap();
        let p = FieldPath::parse("route[*].bend.radius_mm").unwrap();
        assert!(p.is_every());
        let found: Vec<String> = p
            .expand(&doc)
            .unwrap()
            .into_iter()
            .map(|p| p.text)
            .collect();
        assert_eq!(
            found,
            ["route[1].bend.radius_mm", "route[3].bend.radius_mm"]
        );
        let e = FieldPath::parse("route[*].taper.length_mm")
            .unwrap()
            .expand(&doc)
            .unwrap_err();
        assert!(e.contains("no element of route has taper.length_mm"), "{e}");
        let e = FieldPath::parse("guide[*].x")
            .unwrap()
            .expand(&doc)
            .unwrap_err();
        assert!(e.contains("needs a list"), "{e}");
        let one = FieldPath::parse("route[1].bend.radius_mm").unwrap();
        assert_eq!(one.expand(&doc).unwrap(), vec![one.clone()]);
        // Text is set only where text is.
        let mut doc = doc;
        let m = FieldPath::parse("guide.material.library").unwrap();
        m.set_text(&mut doc, "polycarbonate").unwrap();
        assert_eq!(m.text_in(&doc), Ok("polycarbonate"));
        assert!(one
            .set_text(&mut doc, "x")
            .unwrap_err()
            .contains("not a text"));
        assert!(p.number_in(&doc).unwrap_err().contains("several values"));
    }
}
