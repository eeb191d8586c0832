//! Physical sanity failures of a solve, told in the case's own words.
//!
//! The solver reports them with region ids (`fluxpick_solver::sanity`): a system that no
//! boundary condition anchors, NaN or infinite values, a residual above tolerance. Here the
//! ids become the names of the case's entries, with what to change in the case file.

use crate::build::Model;
use crate::case::Case;
use fluxpick_solver::SolveError;

/// A solve that would have given a wrong answer silently, named in the case's terms.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PhysicsError {
    /// Nothing holds the potential: the system is singular.
    #[error("the system is singular: no boundary condition holds the potential in {}{}; {}", quoted(.regions), if *.whole_domain { " (the whole domain)" } else { "" }, if *.whole_domain { "hold it on at least one side: drop one flux-normal [[edge]] or make it `condition = \"flux-parallel\"` (flux-normal edges alone leave the potential free)" } else { "these regions are not connected to any boundary that holds the potential" })]
    NoReference {
        regions: Vec<String>,
        whole_domain: bool,
    },
    /// NaN or infinite values in a solution.
    #[error("the solution has NaN or infinite values in `{region}`: check that entry's material (μr, conductivity, B-H curve) and sizes for extreme values")]
    NotFinite { region: String },
    /// A linear solve whose residual stayed above its tolerance.
    #[error("the linear solve did not reach its tolerance (relative residual {residual:.3e} > {tolerance:.1e}): the system is badly conditioned; check for extreme permeability or conductivity contrasts and for elements much smaller than their neighbours")]
    Residual { residual: f64, tolerance: f64 },
}

fn quoted(names: &[String]) -> String {
    names
        .iter()
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The solver's sanity failure `s` as a [`PhysicsError`] naming the case's entries (None
/// for other solve errors).
pub fn name_regions(case: &Case, s: &SolveError) -> Option<PhysicsError> {
    let names = || {
        Model::new(case)
            .map(|m| m.region_names(case))
            .unwrap_or_default()
    };
    let name = |names: &[String], r: u32| {
        names
            .get(r as usize)
            .cloned()
            .unwrap_or_else(|| format!("region {r}"))
    };
    let p = match s {
        SolveError::NoReference {
            regions,
            whole_domain,
        } => {
            let n = names();
            PhysicsError::NoReference {
                regions: regions.iter().map(|&r| name(&n, r)).collect(),
                whole_domain: *whole_domain,
            }
        }
        SolveError::NotFinite { region } => PhysicsError::NotFinite {
            region: name(&names(), *region),
        },
        SolveError::Residual {
            residual,
            tolerance,
        } => PhysicsError::Residual {
            residual: *residual,
            tolerance: *tolerance,
        },
        _ => return None,
    };
    Some(p)
}

/// Dotted paths of every NaN or infinite number in a serialisable value (`results.json`
/// writes them as `null`, where they could pass for a figure that does not apply).
pub fn non_finite_numbers<T: serde::Serialize>(value: &T) -> Vec<String> {
    let mut found = Vec::new();
    let _ = value.serialize(audit::Audit {
        path: String::new(),
        found: &mut found,
    });
    found
}

/// A serde serialiser that writes nothing and notes the path of each non-finite float.
mod audit {
    use serde::ser::{self, Serialize};

    pub struct Audit<'a> {
        pub path: String,
        pub found: &'a mut Vec<String>,
    }

    #[derive(Debug)]
    pub struct Never;
    impl std::fmt::Display for Never {
        fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
            f.write_str("audit")
        }
    }
    impl std::error::Error for Never {}
    impl ser::Error for Never {
        fn custom<T: std::fmt::Display>(_: T) -> Self {
            Never
        }
    }

    /// A compound value: children are numbered or named under `path`.
    pub struct Compound<'a> {
        path: String,
        found: &'a mut Vec<String>,
        index: usize,
        key: String,
    }

    impl Compound<'_> {
        fn child<T: Serialize + ?Sized>(&mut self, name: &str, v: &T) -> Result<(), Never> {
            let path = if self.path.is_empty() {
                name.to_string()
            } else {
                format!("{}.{name}", self.path)
            };
            v.serialize(Audit {
                path,
                found: self.found,
            })
        }
        fn next<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Never> {
            let i = self.index;
            self.index += 1;
            self.child(&i.to_string(), v)
        }
    }

    macro_rules! seq_like {
        ($($tr:ident :: $m:ident),*) => {$(
            impl ser::$tr for Compound<'_> {
                type Ok = ();
                type Error = Never;
                fn $m<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Never> {
                    self.next(v)
                }
                fn end(self) -> Result<(), Never> {
                    Ok(())
                }
            }
        )*};
    }
    seq_like!(
        SerializeSeq::serialize_element,
        SerializeTuple::serialize_element,
        SerializeTupleStruct::serialize_field,
        SerializeTupleVariant::serialize_field
    );

    macro_rules! struct_like {
        ($($tr:ident),*) => {$(
            impl ser::$tr for Compound<'_> {
                type Ok = ();
                type Error = Never;
                fn serialize_field<T: Serialize + ?Sized>(
                    &mut self,
                    key: &'static str,
                    v: &T,
                ) -> Result<(), Never> {
                    self.child(key, v)
                }
                fn end(self) -> Result<(), Never> {
                    Ok(())
                }
            }
        )*};
    }
    struct_like!(SerializeStruct, SerializeStructVariant);

    impl ser::SerializeMap for Compound<'_> {
        type Ok = ();
        type Error = Never;
        fn serialize_key<T: Serialize + ?Sized>(&mut self, k: &T) -> Result<(), Never> {
            self.key = serde_json::to_string(k)
                .map(|s| s.trim_matches('"').to_string())
                .unwrap_or_default();
            Ok(())
        }
        fn serialize_value<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Never> {
            let k = std::mem::take(&mut self.key);
            self.child(&k, v)
        }
        fn end(self) -> Result<(), Never> {
            Ok(())
        }
    }

    impl<'a> Audit<'a> {
        fn compound(self) -> Compound<'a> {
            Compound {
                path: self.path,
                found: self.found,
                index: 0,
                key: String::new(),
            }
        }
        fn float(self, v: f64) -> Result<(), Never> {
            if !v.is_finite() {
                self.found.push(self.path);
            }
            Ok(())
        }
    }

    impl<'a> ser::Serializer for Audit<'a> {
        type Ok = ();
        type Error = Never;
        type SerializeSeq = Compound<'a>;
        type SerializeTuple = Compound<'a>;
        type SerializeTupleStruct = Compound<'a>;
        type SerializeTupleVariant = Compound<'a>;
        type SerializeMap = Compound<'a>;
        type SerializeStruct = Compound<'a>;
        type SerializeStructVariant = Compound<'a>;

        fn serialize_f64(self, v: f64) -> Result<(), Never> {
            self.float(v)
        }
        fn serialize_f32(self, v: f32) -> Result<(), Never> {
            self.float(v.into())
        }
        fn serialize_bool(self, _: bool) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_i8(self, _: i8) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_i16(self, _: i16) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_i32(self, _: i32) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_i64(self, _: i64) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_u8(self, _: u8) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_u16(self, _: u16) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_u32(self, _: u32) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_u64(self, _: u64) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_char(self, _: char) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_str(self, _: &str) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_bytes(self, _: &[u8]) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_none(self) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_some<T: Serialize + ?Sized>(self, v: &T) -> Result<(), Never> {
            v.serialize(self)
        }
        fn serialize_unit(self) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_unit_struct(self, _: &'static str) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_unit_variant(
            self,
            _: &'static str,
            _: u32,
            _: &'static str,
        ) -> Result<(), Never> {
            Ok(())
        }
        fn serialize_newtype_struct<T: Serialize + ?Sized>(
            self,
            _: &'static str,
            v: &T,
        ) -> Result<(), Never> {
            v.serialize(self)
        }
        fn serialize_newtype_variant<T: Serialize + ?Sized>(
            self,
            _: &'static str,
            _: u32,
            _: &'static str,
            v: &T,
        ) -> Result<(), Never> {
            v.serialize(self)
        }
        fn serialize_seq(self, _: Option<usize>) -> Result<Compound<'a>, Never> {
            Ok(self.compound())
        }
        fn serialize_tuple(self, _: usize) -> Result<Compound<'a>, Never> {
            Ok(self.compound())
        }
        fn serialize_tuple_struct(self, _: &'static str, _: usize) -> Result<Compound<'a>, Never> {
            Ok(self.compound())
        }
        fn serialize_tuple_variant(
            self,
            _: &'static str,
            _: u32,
            _: &'static str,
            _: usize,
        ) -> Result<Compound<'a>, Never> {
            Ok(self.compound())
        }
        fn serialize_map(self, _: Option<usize>) -> Result<Compound<'a>, Never> {
            Ok(self.compound())
        }
        fn serialize_struct(self, _: &'static str, _: usize) -> Result<Compound<'a>, Never> {
            Ok(self.compound())
        }
        fn serialize_struct_variant(
            self,
            _: &'static str,
            _: u32,
            _: &'static str,
            _: usize,
        ) -> Result<Compound<'a>, Never> {
            Ok(self.compound())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::non_finite_numbers;
    use std::collections::BTreeMap;

    #[derive(serde::Serialize)]
    struct Inner {
        ok: f64,
        maybe: Option<f64>,
        list: Vec<Option<[f64; 2]>>,
    }

    #[derive(serde::Serialize)]
    struct Outer {
        a: f64,
        by_name: BTreeMap<String, Inner>,
    }

    #[test]
    fn finds_every_non_finite_number_by_path() {
        let mut by_name = BTreeMap::new();
        by_name.insert(
            "core".to_string(),
            Inner {
                ok: 1.0,
                maybe: Some(f64::INFINITY),
                list: vec![None, Some([0.0, f64::NAN])],
            },
        );
        by_name.insert(
            "rod".to_string(),
            Inner {
                ok: 2.0,
                maybe: None,
                list: vec![],
            },
        );
        let v = Outer { a: 0.5, by_name };
        assert_eq!(
            non_finite_numbers(&v),
            vec!["by_name.core.maybe", "by_name.core.list.1.1"]
        );
        let clean = Outer {
            a: f64::MAX,
            by_name: BTreeMap::new(),
        };
        assert!(non_finite_numbers(&clean).is_empty());
    }
}
