//! The case-file reference cannot drift from the parser.
//!
//! 1. `docs/case-reference.md` must equal what `src/schema.rs` generates (regenerate with
//!    `FLUXPICK_BLESS=1 cargo test --release --test case_reference`).
//! 2. Every key the parser accepts must have a schema entry, and every schema entry must be a
//!    key the parser accepts, with the same kind of value and the same choices. The keys are
//!    found by driving the serde `Deserialize` impls of `fluxpick::case::raw::RawCase` with a
//!    tracing deserializer: serde's derive hands every struct's full field list to
//!    `deserialize_struct` and every enum's variant list to `deserialize_enum`, so a field
//!    added to any raw struct shows up here without anyone listing it.
//! 3. `fluxpick explain KEY` prints the same lines as the reference.

mod common;

use std::collections::BTreeMap;
use std::fmt;

use fluxpick::case::raw::RawCase;
use fluxpick::schema::{self, Type};
use serde::de::value::BorrowedStrDeserializer;
use serde::de::{self, DeserializeSeed, Deserializer, IntoDeserializer, MapAccess, SeqAccess};
use serde::Deserialize;

// ---------------------------------------------------------------------------------------
// the tracing deserializer

#[derive(Debug)]
struct TraceError(String);

impl fmt::Display for TraceError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}
impl std::error::Error for TraceError {}
impl de::Error for TraceError {
    fn custom<T: fmt::Display>(msg: T) -> Self {
        TraceError(msg.to_string())
    }
}

/// What the parser asked for at one path.
#[derive(Clone, Debug, PartialEq)]
enum Seen {
    /// A struct (a TOML table with fixed keys) with its field names.
    Struct(Vec<String>),
    /// A map with free keys (`[parameters]`, `[materials]`).
    Map,
    /// A sequence; its elements are recorded at `path[]`.
    Seq,
    /// A number or an expression string (`Num`, via `deserialize_any`).
    Any,
    /// A string.
    Str,
    /// A unit enum with its variant names.
    Enum(Vec<String>),
}

type Log = BTreeMap<String, Seen>;

/// Deserializes any raw type by asking for everything it could hold. `path` is `None` for
/// the private fields of `toml::Spanned` (its byte offsets), which are not case keys.
struct Tracer<'a> {
    path: Option<String>,
    log: &'a std::cell::RefCell<Log>,
}

/// `toml::Spanned<T>` deserializes as a struct with this name prefix and three private
/// fields; its value is the wrapped `T` at the same path.
const SPANNED_PREFIX: &str = "$__serde_spanned_private";

impl<'a> Tracer<'a> {
    fn at(&self, path: Option<String>) -> Tracer<'a> {
        Tracer {
            path,
            log: self.log,
        }
    }
    fn child(&self, seg: &str) -> Tracer<'a> {
        self.at(self.path.as_ref().map(|p| {
            if p.is_empty() {
                seg.to_string()
            } else {
                format!("{p}.{seg}")
            }
        }))
    }
    fn record(&self, seen: Seen) {
        if let Some(p) = &self.path {
            let mut log = self.log.borrow_mut();
            if let Some(old) = log.get(p) {
                assert_eq!(old, &seen, "{p}: seen as two kinds of value");
            }
            log.insert(p.clone(), seen);
        }
    }
}

/// The fields of one struct, each key followed by a traced value.
struct Fields<'a> {
    parent: Tracer<'a>,
    fields: Vec<&'static str>,
    next: usize,
    spanned: bool,
}

impl<'de, 'a> MapAccess<'de> for Fields<'a> {
    type Error = TraceError;
    fn next_key_seed<K: DeserializeSeed<'de>>(
        &mut self,
        seed: K,
    ) -> Result<Option<K::Value>, TraceError> {
        match self.fields.get(self.next) {
            None => Ok(None),
            Some(f) => seed.deserialize(BorrowedStrDeserializer::new(f)).map(Some),
        }
    }
    fn next_value_seed<V: DeserializeSeed<'de>>(
        &mut self,
        seed: V,
    ) -> Result<V::Value, TraceError> {
        let f = self.fields[self.next];
        self.next += 1;
        let t = if self.spanned {
            if f.ends_with("_value") {
                // The wrapped value: same path.
                self.parent.at(self.parent.path.clone())
            } else {
                self.parent.at(None)
            }
        } else {
            self.parent.child(f)
        };
        seed.deserialize(t)
    }
}

/// A map with one entry, key `NAME`.
struct OneEntry<'a> {
    parent: Tracer<'a>,
    done: bool,
}

impl<'de, 'a> MapAccess<'de> for OneEntry<'a> {
    type Error = TraceError;
    fn next_key_seed<K: DeserializeSeed<'de>>(
        &mut self,
        seed: K,
    ) -> Result<Option<K::Value>, TraceError> {
        if self.done {
            return Ok(None);
        }
        seed.deserialize(BorrowedStrDeserializer::new("NAME"))
            .map(Some)
    }
    fn next_value_seed<V: DeserializeSeed<'de>>(
        &mut self,
        seed: V,
    ) -> Result<V::Value, TraceError> {
        self.done = true;
        seed.deserialize(self.parent.child("NAME"))
    }
}

/// A sequence of two elements (pairs need exactly two), traced at `path[]`.
struct Two<'a> {
    elem: Tracer<'a>,
    left: usize,
}

impl<'de, 'a> SeqAccess<'de> for Two<'a> {
    type Error = TraceError;
    fn next_element_seed<T: DeserializeSeed<'de>>(
        &mut self,
        seed: T,
    ) -> Result<Option<T::Value>, TraceError> {
        if self.left == 0 {
            return Ok(None);
        }
        self.left -= 1;
        seed.deserialize(self.elem.at(self.elem.path.clone()))
            .map(Some)
    }
}

impl<'de, 'a> Deserializer<'de> for Tracer<'a> {
    type Error = TraceError;

    fn deserialize_any<V: de::Visitor<'de>>(self, v: V) -> Result<V::Value, TraceError> {
        // Only `Num` (a number or an expression string) asks for "anything".
        self.record(Seen::Any);
        v.visit_u64(2)
    }
    fn deserialize_u64<V: de::Visitor<'de>>(self, v: V) -> Result<V::Value, TraceError> {
        v.visit_u64(0)
    }
    fn deserialize_string<V: de::Visitor<'de>>(self, v: V) -> Result<V::Value, TraceError> {
        self.record(Seen::Str);
        v.visit_str("text")
    }
    fn deserialize_str<V: de::Visitor<'de>>(self, v: V) -> Result<V::Value, TraceError> {
        self.deserialize_string(v)
    }
    fn deserialize_option<V: de::Visitor<'de>>(self, v: V) -> Result<V::Value, TraceError> {
        v.visit_some(self)
    }
    fn deserialize_seq<V: de::Visitor<'de>>(self, v: V) -> Result<V::Value, TraceError> {
        self.record(Seen::Seq);
        let elem = self.at(self.path.as_ref().map(|p| format!("{p}[]")));
        v.visit_seq(Two { elem, left: 2 })
    }
    fn deserialize_map<V: de::Visitor<'de>>(self, v: V) -> Result<V::Value, TraceError> {
        self.record(Seen::Map);
        v.visit_map(OneEntry {
            parent: self,
            done: false,
        })
    }
    fn deserialize_struct<V: de::Visitor<'de>>(
        self,
        name: &'static str,
        fields: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, TraceError> {
        let spanned = name.starts_with(SPANNED_PREFIX);
        if !spanned {
            self.record(Seen::Struct(fields.iter().map(|f| f.to_string()).collect()));
        }
        v.visit_map(Fields {
            parent: self,
            fields: fields.to_vec(),
            next: 0,
            spanned,
        })
    }
    fn deserialize_enum<V: de::Visitor<'de>>(
        self,
        _name: &'static str,
        variants: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, TraceError> {
        self.record(Seen::Enum(variants.iter().map(|s| s.to_string()).collect()));
        v.visit_enum(variants[0].into_deserializer())
    }
    fn deserialize_identifier<V: de::Visitor<'de>>(self, v: V) -> Result<V::Value, TraceError> {
        self.deserialize_string(v)
    }

    serde::forward_to_deserialize_any! {
        bool i8 i16 i32 i64 i128 u8 u16 u32 u128 f32 f64 char bytes byte_buf unit unit_struct
        newtype_struct tuple tuple_struct ignored_any
    }
}

/// Every path the parser accepts, with what it asked for there.
fn accepted() -> Log {
    let log = std::cell::RefCell::new(Log::new());
    let t = Tracer {
        path: Some(String::new()),
        log: &log,
    };
    RawCase::deserialize(t).expect("the tracer satisfies every raw struct");
    let mut log = log.into_inner();
    log.remove("");
    log
}

/// Case keys (paths of struct fields and map entries, without the `[]` of sequences) and
/// what each holds, as a schema `Type` would describe it.
fn accepted_keys() -> BTreeMap<String, (Seen, Option<Seen>)> {
    let log = accepted();
    let mut out = BTreeMap::new();
    for (path, seen) in &log {
        if path.ends_with("[]") {
            continue;
        }
        let elem = log.get(&format!("{path}[]")).cloned();
        out.insert(path.replace("[]", ""), (seen.clone(), elem));
    }
    out
}

/// Whether what the parser reads at a key fits the schema's type for it.
fn type_fits(ty: Type, seen: &Seen, elem: Option<&Seen>) -> bool {
    match ty {
        Type::Table => matches!(seen, Seen::Struct(_) | Seen::Map),
        Type::TableArray => matches!(seen, Seen::Seq) && matches!(elem, Some(Seen::Struct(_))),
        Type::Number | Type::Whole | Type::MatchedOrNumber => matches!(seen, Seen::Any),
        Type::Text => matches!(seen, Seen::Str),
        Type::Choice => matches!(seen, Seen::Enum(_)),
        Type::Pair | Type::NumberList => {
            matches!(seen, Seen::Seq) && matches!(elem, Some(Seen::Any))
        }
        Type::PairList => matches!(seen, Seen::Seq) && matches!(elem, Some(Seen::Seq)),
    }
}

// ---------------------------------------------------------------------------------------
// the tests

/// Checks the tracer itself on keys known from docs/case-format.md, so that a tracer that found
/// nothing could not pass the checks below vacuously.
#[test]
fn tracer_finds_known_keys() {
    let keys = accepted_keys();
    for k in [
        "model.symmetry",
        "model.accuracy",
        "model.max_triangles",
        "domain.rect.min",
        "part.circle.radius",
        "coil.sides.sense",
        "coil.sides.polygon",
        "materials.NAME.mu_r",
        "parameters.NAME",
        "circuit.storage.voltage",
        "sweep.group",
    ] {
        assert!(keys.contains_key(k), "tracer missed {k}: {:?}", keys.keys());
    }
    assert_eq!(
        keys["model.symmetry"].0,
        Seen::Enum(vec!["planar".into(), "axisymmetric".into()])
    );
    assert!(keys.len() > 100, "only {} keys traced", keys.len());
}

#[test]
fn every_accepted_key_has_a_schema_entry() {
    let keys = accepted_keys();
    let mut missing = Vec::new();
    let mut wrong = Vec::new();
    for (k, (seen, elem)) in &keys {
        match schema::entry(k) {
            None => missing.push(k.clone()),
            Some(d) => {
                if !type_fits(d.ty, seen, elem.as_ref()) {
                    wrong.push(format!(
                        "{k}: schema says {:?}, the parser reads {seen:?} (elements {elem:?})",
                        d.ty
                    ));
                }
                if let Seen::Enum(v) = seen {
                    let listed: Vec<String> = d.choices.iter().map(|s| s.to_string()).collect();
                    if &listed != v {
                        wrong.push(format!(
                            "{k}: schema lists choices {listed:?}, the parser accepts {v:?}"
                        ));
                    }
                }
            }
        }
    }
    assert!(
        missing.is_empty(),
        "the parser accepts these keys but src/schema.rs has no entry for them: {}\n\
         add an entry to schema::KEYS (or SHAPE_KEYS), then regenerate the reference with \
         FLUXPICK_BLESS=1 cargo test --release --test case_reference",
        missing.join(", ")
    );
    assert!(wrong.is_empty(), "{}", wrong.join("\n"));
}

#[test]
fn every_schema_entry_is_an_accepted_key() {
    let keys = accepted_keys();
    let mut stale = Vec::new();
    for d in schema::KEYS {
        if !keys.contains_key(d.key) {
            stale.push(d.key);
        }
    }
    // Shape keys: each must be accepted under every owner.
    for d in schema::SHAPE_KEYS {
        for owner in schema::SHAPE_OWNERS {
            let k = format!("{owner}.{}", d.key);
            if !keys.contains_key(&k) {
                stale.push(d.key);
            }
        }
    }
    assert!(
        stale.is_empty(),
        "src/schema.rs documents keys the parser does not accept: {stale:?}"
    );
}

#[test]
fn reference_doc_matches_schema() {
    let path = common::repo().join("docs/case-reference.md");
    let want = schema::reference_markdown();
    if std::env::var_os("FLUXPICK_BLESS").is_some() {
        std::fs::write(&path, &want).unwrap();
        return;
    }
    let have = std::fs::read_to_string(&path).unwrap_or_default();
    if have != want {
        let first = have
            .lines()
            .zip(want.lines())
            .position(|(a, b)| a != b)
            .unwrap_or(have.lines().count().min(want.lines().count()));
        panic!(
            "docs/case-reference.md differs from src/schema.rs (first at line {}):\n  doc:    {:?}\n  schema: {:?}\n\
             regenerate with FLUXPICK_BLESS=1 cargo test --release --test case_reference",
            first + 1,
            have.lines().nth(first),
            want.lines().nth(first)
        );
    }
}

#[test]
fn every_example_is_valid_toml_for_its_key() {
    for d in schema::all() {
        // Table headers are examples of where keys go, not values.
        if d.example.starts_with('[') {
            continue;
        }
        let v: Result<toml::Table, _> = toml::from_str(d.example);
        let t = v.unwrap_or_else(|e| panic!("{}: example {:?} is not TOML: {e}", d.key, d.example));
        let leaf = d.key.rsplit('.').next().unwrap();
        let named = leaf == "NAME" || t.contains_key(leaf);
        assert!(
            named,
            "{}: example {:?} does not set `{leaf}`",
            d.key, d.example
        );
    }
}

#[test]
fn explain_prints_the_reference_entry() {
    for key in ["model.accuracy", "model.max_triangles", "part.rect.min"] {
        let out = common::fluxpick(&["explain", key]);
        assert!(out.status.success(), "{key}: {out:?}");
        let text = String::from_utf8_lossy(&out.stdout);
        let d = schema::entry(key).unwrap();
        assert!(text.contains(d.meaning), "{key}: {text}");
        for (label, value) in schema::entry_lines(d) {
            assert!(
                text.contains(&format!("{label}:")) && text.contains(&value),
                "{key}: `{label}: {value}` missing from\n{text}"
            );
            let doc = std::fs::read_to_string(common::repo().join("docs/case-reference.md"))
                .unwrap_or_default();
            assert!(
                doc.contains(d.meaning),
                "{key}: meaning not in the reference"
            );
        }
    }
    // A misspelt key gets the closest one and exit status 2.
    let out = common::fluxpick(&["explain", "model.acuracy"]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("model.accuracy"), "{err}");
}
