//! JSON Schemas of the documents, generated from their Rust types, so that an editor can check
//! and complete a document as it is typed (`docs/SCHEMA.md`). `tirtrace schema NAME` prints one;
//! `docs/schema/NAME.schema.json` holds each, kept in step with the types by `tests/schema.rs`.
//!
//! The schema carries what the reader refuses (unknown fields, wrong types, missing fields) and
//! the fixed ranges of [`crate::limits`] (as `minimum`, `exclusiveMinimum`, …). Ranges that hang
//! on other fields (a bend's radius above half the section across it, a contact within its
//! segment) are only described; `tirtrace check` reports those.

use schemars::generate::SchemaSettings;
use schemars::transform::{transform_subschemas, Transform};
use schemars::{json_schema, JsonSchema, Schema};

use crate::limits::{Count, Range};

/// A function making one document's schema.
pub type MakeSchema = fn() -> Schema;

/// Every document with a schema, by the name `tirtrace schema` takes, and its schema. A new
/// document is one more line here (and its file in `docs/schema/`).
pub const DOCUMENTS: &[(&str, MakeSchema)] = &[
    ("scenario", schema_of::<crate::scenario::Scenario>),
    ("design", schema_of::<crate::quick::QuickDesign>),
    ("study", schema_of::<crate::study::StudyDocument>),
];

/// The schema of a document type (JSON Schema 2020-12, every definition inside it).
pub fn schema_of<T: JsonSchema>() -> Schema {
    SchemaSettings::draft2020_12()
        .with_transform(JoinLines)
        .into_generator()
        .into_root_schema_for::<T>()
}

/// Descriptions come from doc comments wrapped at 100 columns: join the wrapped lines so that an
/// editor re-flows them (a blank line still parts paragraphs).
#[derive(Debug, Clone, Copy)]
struct JoinLines;

impl Transform for JoinLines {
    fn transform(&mut self, schema: &mut Schema) {
        if let Some(serde_json::Value::String(text)) = schema.get_mut("description") {
            *text = text
                .split("\n\n")
                .map(|paragraph| paragraph.replace('\n', " "))
                .collect::<Vec<_>>()
                .join("\n\n");
        }
        transform_subschemas(self, schema);
    }
}

/// The schema of the document called `name`, as pretty JSON with a final newline, or `None` for
/// a name not in [`DOCUMENTS`].
pub fn schema_json(name: &str) -> Option<String> {
    let (_, schema) = DOCUMENTS.iter().find(|(n, _)| *n == name)?;
    let text = serde_json::to_string_pretty(&schema()).expect("a schema always serialises");
    Some(text + "\n")
}

/// A number's range as `minimum`/`exclusiveMinimum` and `maximum`/`exclusiveMaximum` (an
/// infinite end is left out).
impl Transform for Range {
    fn transform(&mut self, schema: &mut Schema) {
        if self.lo.is_finite() {
            let key = if self.lo_closed {
                "minimum"
            } else {
                "exclusiveMinimum"
            };
            schema.insert(key.into(), self.lo.into());
        }
        if self.hi.is_finite() {
            let key = if self.hi_closed {
                "maximum"
            } else {
                "exclusiveMaximum"
            };
            schema.insert(key.into(), self.hi.into());
        }
    }
}

/// A whole number's range as `minimum` and `maximum`.
impl Transform for Count {
    fn transform(&mut self, schema: &mut Schema) {
        schema.insert("minimum".into(), self.min.into());
        schema.insert("maximum".into(), self.max.into());
    }
}

/// A range applied to each item of an array (`source.offset_mm`).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Items(pub(crate) Range);

impl Transform for Items {
    fn transform(&mut self, schema: &mut Schema) {
        let mut item = json_schema!({ "type": "number" });
        self.0.transform(&mut item);
        schema.insert("items".into(), item.to_value());
    }
}

/// The only document version this tirtrace reads.
pub(crate) fn version(current: u32) -> impl Transform {
    move |schema: &mut Schema| {
        schema.insert("const".into(), current.into());
    }
}

/// The identifiers of the built-in materials, for completion.
pub(crate) fn library_ids(schema: &mut Schema) {
    let ids: Vec<&str> = crate::index::library::materials()
        .iter()
        .map(|m| m.id)
        .collect();
    schema.insert("enum".into(), ids.into());
}

/// A receiver is a disk (`diameter_mm` alone) or a window (`width_mm` and `height_mm`); an
/// absent size and a `null` one read the same.
pub(crate) fn disk_or_window(schema: &mut Schema) {
    let one_of = json_schema!({
        "oneOf": [
            {
                "required": ["diameter_mm"],
                "properties": {
                    "diameter_mm": { "type": "number" },
                    "width_mm": { "type": "null" },
                    "height_mm": { "type": "null" }
                }
            },
            {
                "required": ["width_mm", "height_mm"],
                "properties": {
                    "diameter_mm": { "type": "null" },
                    "width_mm": { "type": "number" },
                    "height_mm": { "type": "number" }
                }
            }
        ]
    });
    if let Some(v) = one_of.get("oneOf") {
        schema.insert("oneOf".into(), v.clone());
    }
}

/// A range to apply to a field's schema: `#[schemars(transform = within(limits::GAP_MM))]`
/// (a call, so that the derive's `&mut` takes a value rather than a constant).
pub(crate) fn within<T: Transform>(limit: T) -> T {
    limit
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::limits::{Count, Range};

    fn applied(mut t: impl Transform) -> Schema {
        let mut schema = json_schema!({ "type": "number" });
        t.transform(&mut schema);
        schema
    }

    #[test]
    fn open_ends_become_exclusive_bounds_and_infinite_ends_vanish() {
        let s = applied(Range::open_closed(0.0, 10.0));
        assert_eq!(s.get("exclusiveMinimum"), Some(&0.0.into()));
        assert_eq!(s.get("maximum"), Some(&10.0.into()));
        assert!(s.get("minimum").is_none() && s.get("exclusiveMaximum").is_none());
        let s = applied(Range::closed_open(-1.0, f64::INFINITY));
        assert_eq!(s.get("minimum"), Some(&(-1.0).into()));
        assert!(s.get("maximum").is_none() && s.get("exclusiveMaximum").is_none());
        let s = applied(Count::new(1, 7));
        assert_eq!(
            (s.get("minimum"), s.get("maximum")),
            (Some(&1.into()), Some(&7.into()))
        );
    }

    #[test]
    fn wrapped_doc_lines_are_joined_and_paragraphs_kept() {
        let mut s = json_schema!({
            "description": "one\ntwo\n\nthree",
            "properties": { "x": { "description": "a\nb" } }
        });
        JoinLines.transform(&mut s);
        assert_eq!(s.get("description"), Some(&"one two\n\nthree".into()));
        assert_eq!(s.pointer("/properties/x/description"), Some(&"a b".into()));
    }
}
