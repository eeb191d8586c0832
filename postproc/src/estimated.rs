//! A figure and its estimated relative error as one value, and the records that hold them.
//!
//! In results files an estimated figure `x` is written as two keys, `x` (the value) and
//! `x_err` (its estimated relative discretisation error, null where none is made), so the
//! figure records are declared with [`figure_record!`](crate::figure_record), which writes
//! that serialisation.

use serde::ser::SerializeMap;
use serde::Serialize;

/// A figure with its estimated relative error (None where no estimate is made).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Estimated<T> {
    pub value: T,
    pub err: Option<f64>,
}

impl<T> Estimated<T> {
    pub fn new(value: T, err: Option<f64>) -> Self {
        Estimated { value, err }
    }
}

/// One field of a figure record on its way into a serialised map (see [`figure_record!`]).
pub struct Field<'a, T>(pub &'a T);

/// How an [`Estimated`] field is written: as `key` and `key_err`.
pub trait PutEstimated {
    fn put<M: SerializeMap>(&self, key: &'static str, map: &mut M) -> Result<(), M::Error>;
}

/// How any other field is written: as `key`.
pub trait PutPlain {
    fn put<M: SerializeMap>(&self, key: &'static str, map: &mut M) -> Result<(), M::Error>;
}

impl<T: Serialize> PutEstimated for Field<'_, Estimated<T>> {
    fn put<M: SerializeMap>(&self, key: &'static str, map: &mut M) -> Result<(), M::Error> {
        map.serialize_entry(key, &self.0.value)?;
        map.serialize_entry(&format!("{key}_err"), &self.0.err)
    }
}

impl<T: Serialize> PutPlain for &Field<'_, T> {
    fn put<M: SerializeMap>(&self, key: &'static str, map: &mut M) -> Result<(), M::Error> {
        map.serialize_entry(key, self.0)
    }
}

/// Declares a figure record (a struct of named figures) serialised as a map of its fields
/// in order, each [`Estimated`] one as `name` and `name_err`, the others as `name`. (The
/// choice is made by method resolution: `(&Field(x)).put(..)` finds [`PutEstimated`] for an
/// `Estimated` field before the auto-referenced [`PutPlain`].)
#[macro_export]
macro_rules! figure_record {
    ($(#[$m:meta])* pub struct $name:ident { $($(#[$fm:meta])* pub $f:ident: $t:ty,)* }) => {
        $(#[$m])*
        pub struct $name { $($(#[$fm])* pub $f: $t,)* }

        impl serde::Serialize for $name {
            fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
                use serde::ser::SerializeMap as _;
                #[allow(unused_imports)]
                use $crate::estimated::{PutEstimated as _, PutPlain as _};
                let mut m = s.serialize_map(None)?;
                $((&$crate::estimated::Field(&self.$f)).put(stringify!($f), &mut m)?;)*
                m.end()
            }
        }
    };
}

#[cfg(test)]
mod tests {
    use super::*;

    figure_record! {
        /// A record for the test.
        #[derive(Clone, Debug)]
        pub struct Sample {
            pub name: String,
            pub b_t: Estimated<f64>,
            pub q: Estimated<Option<f64>>,
            pub plain: Option<f64>,
        }
    }

    #[test]
    fn estimated_fields_are_written_as_value_and_error_keys() {
        let s = Sample {
            name: "core".into(),
            b_t: Estimated::new(1.5, Some(0.01)),
            q: Estimated::new(None, None),
            plain: Some(2.0),
        };
        let text = serde_json::to_string(&s).unwrap();
        assert_eq!(
            text,
            r#"{"name":"core","b_t":1.5,"b_t_err":0.01,"q":null,"q_err":null,"plain":2.0}"#
        );
    }
}
