//! Raw serde structs mirroring the case format (docs/case-format.md) key for key.
//!
//! Nothing here is validated beyond what serde and TOML check (known keys, types, array
//! lengths); units are not applied and expressions are not evaluated. Every value that a later
//! check may complain about is wrapped in [`toml::Spanned`] so that the error can underline
//! it. `crate::case::resolve` turns a [`RawCase`] into the typed, SI-unit `Case`.
//!
//! Shape keys (`rect`, `circle`, `ellipse`, `annulus`, `polygon`) sit directly in the entity's
//! table; they are separate optional fields here (serde's `flatten` would defeat both
//! `deny_unknown_fields` and the spans), and the resolver checks that exactly one is set.

use std::collections::BTreeMap;
use std::fmt;

use serde::de::{self, Deserializer, Visitor};
use serde::Deserialize;
use toml::Spanned;

/// A number as written: a TOML integer or float, or a string holding an expression.
#[derive(Clone, Debug, PartialEq)]
pub enum Num {
    Value(f64),
    Expr(String),
}

impl<'de> Deserialize<'de> for Num {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = Num;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("a number or a string holding an expression")
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Num, E> {
                Ok(Num::Value(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Num, E> {
                Ok(Num::Value(v as f64))
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<Num, E> {
                Ok(Num::Value(v))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Num, E> {
                Ok(Num::Expr(v.to_string()))
            }
        }
        d.deserialize_any(V)
    }
}

/// A spanned number or expression.
pub type SNum = Spanned<Num>;
/// Exactly two numbers, `[x, y]` (or `[r, z]`, `[nx, ny]`, `[H, B]`). A plain `[SNum; 2]`
/// would silently drop a third element (the TOML deserializer does not reject leftovers).
#[derive(Clone, Debug, PartialEq)]
pub struct Pair(pub [SNum; 2]);

impl<'de> Deserialize<'de> for Pair {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let v: Vec<SNum> = Vec::deserialize(d)?;
        let n = v.len();
        let arr: [SNum; 2] = v
            .try_into()
            .map_err(|_| de::Error::invalid_length(n, &"an array of 2 numbers"))?;
        Ok(Pair(arr))
    }
}

/// A spanned pair.
pub type Pt = Spanned<Pair>;

/// The whole case file.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCase {
    pub model: Spanned<RawModel>,
    #[serde(default)]
    pub parameters: Option<Spanned<BTreeMap<String, SNum>>>,
    pub domain: Spanned<RawDomain>,
    #[serde(default, rename = "edge")]
    pub edges: Vec<Spanned<RawEdge>>,
    #[serde(default)]
    pub background: Option<Spanned<RawBackground>>,
    #[serde(default)]
    pub materials: BTreeMap<String, Spanned<RawMaterial>>,
    #[serde(default, rename = "part")]
    pub parts: Vec<Spanned<RawPart>>,
    #[serde(default, rename = "conductor")]
    pub conductors: Vec<Spanned<RawConductor>>,
    #[serde(default, rename = "coil")]
    pub coils: Vec<Spanned<RawCoil>>,
    #[serde(default)]
    pub circuit: Option<Spanned<RawCircuit>>,
    #[serde(default, rename = "probe")]
    pub probes: Vec<Spanned<RawProbe>>,
    #[serde(default, rename = "sweep")]
    pub sweeps: Vec<Spanned<RawSweep>>,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RawSymmetry {
    Planar,
    Axisymmetric,
}

/// How the accuracy loop refines: where the error is (the default) or everywhere.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RawRefinement {
    Adaptive,
    Uniform,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
pub enum RawLengthUnit {
    #[serde(rename = "mm")]
    Mm,
    #[serde(rename = "cm")]
    Cm,
    #[serde(rename = "m")]
    M,
    #[serde(rename = "in")]
    In,
}

impl RawLengthUnit {
    /// Metres per unit (1 in = 25.4 mm exactly, by the 1959 international agreement).
    pub fn metres(self) -> f64 {
        match self {
            RawLengthUnit::Mm => 1e-3,
            RawLengthUnit::Cm => 1e-2,
            RawLengthUnit::M => 1.0,
            RawLengthUnit::In => 0.0254,
        }
    }
}

/// `[model]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawModel {
    #[serde(default)]
    pub title: Option<Spanned<String>>,
    pub symmetry: Spanned<RawSymmetry>,
    #[serde(default)]
    pub frequency: Option<SNum>,
    #[serde(default)]
    pub length_unit: Option<Spanned<RawLengthUnit>>,
    #[serde(default)]
    pub depth: Option<SNum>,
    #[serde(default)]
    pub element_order: Option<SNum>,
    /// Relative accuracy target of the adaptive refinement (e.g. 0.005); absent: one mesh.
    #[serde(default)]
    pub accuracy: Option<SNum>,
    /// Element budget of the adaptive refinement (triangles of the domain).
    #[serde(default)]
    pub max_triangles: Option<SNum>,
    /// "adaptive" (refine where the estimated error is) or "uniform" (every cell, for
    /// comparison).
    #[serde(default)]
    pub refinement: Option<Spanned<RawRefinement>>,
}

/// `rect = { min, max }` or `rect = { center, size }`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawRect {
    #[serde(default)]
    pub min: Option<Pt>,
    #[serde(default)]
    pub max: Option<Pt>,
    #[serde(default)]
    pub center: Option<Pt>,
    #[serde(default)]
    pub size: Option<Pt>,
}

/// `circle = { center, radius }`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCircle {
    pub center: Pt,
    pub radius: SNum,
}

/// `ellipse = { center, semi_axes }`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawEllipse {
    pub center: Pt,
    pub semi_axes: Pt,
}

/// `annulus = { center, inner, outer }`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawAnnulus {
    pub center: Pt,
    pub inner: SNum,
    pub outer: SNum,
}

/// The shape keys of one entity, borrowed, for the resolver.
#[derive(Clone, Copy, Debug)]
pub struct ShapeKeys<'a> {
    pub rect: Option<&'a Spanned<RawRect>>,
    pub circle: Option<&'a Spanned<RawCircle>>,
    pub ellipse: Option<&'a Spanned<RawEllipse>>,
    pub annulus: Option<&'a Spanned<RawAnnulus>>,
    pub polygon: Option<&'a Spanned<Vec<Pt>>>,
}

/// Defines an entity struct whose table may hold shape keys, plus its `shape_keys()` accessor.
macro_rules! with_shape_keys {
    (
        $(#[$meta:meta])*
        pub struct $name:ident { $($(#[$fmeta:meta])* pub $field:ident : $ty:ty,)* }
    ) => {
        $(#[$meta])*
        #[derive(Clone, Debug, Deserialize)]
        #[serde(deny_unknown_fields)]
        pub struct $name {
            $($(#[$fmeta])* pub $field: $ty,)*
            #[serde(default)]
            pub rect: Option<Spanned<RawRect>>,
            #[serde(default)]
            pub circle: Option<Spanned<RawCircle>>,
            #[serde(default)]
            pub ellipse: Option<Spanned<RawEllipse>>,
            #[serde(default)]
            pub annulus: Option<Spanned<RawAnnulus>>,
            #[serde(default)]
            pub polygon: Option<Spanned<Vec<Pt>>>,
        }
        impl $name {
            /// The shape keys present in this table.
            pub fn shape_keys(&self) -> ShapeKeys<'_> {
                ShapeKeys {
                    rect: self.rect.as_ref(),
                    circle: self.circle.as_ref(),
                    ellipse: self.ellipse.as_ref(),
                    annulus: self.annulus.as_ref(),
                    polygon: self.polygon.as_ref(),
                }
            }
        }
    };
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RawBoundary {
    Open,
    Fixed,
}

with_shape_keys! {
    /// `[domain]`: one shape key (rect, or circle), boundary, mesh_size.
    pub struct RawDomain {
        #[serde(default)]
        pub boundary: Option<Spanned<RawBoundary>>,
        pub mesh_size: SNum,
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RawSide {
    Left,
    Right,
    Bottom,
    Top,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum RawEdgeCondition {
    FluxNormal,
    FluxParallel,
}

/// `[[edge]]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawEdge {
    pub side: Spanned<RawSide>,
    pub condition: Spanned<RawEdgeCondition>,
}

/// `[background]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawBackground {
    pub b: SNum,
    pub direction: Pt,
    #[serde(default)]
    pub phase: Option<SNum>,
}

/// `[materials.NAME]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawMaterial {
    /// Relative permeability; default 1.
    #[serde(default)]
    pub mu_r: Option<SNum>,
    /// S/m; default 0.
    #[serde(default)]
    pub conductivity: Option<SNum>,
    /// Optional B-H curve, `[[H A/m, B T], ...]`.
    #[serde(default)]
    pub bh: Option<Spanned<Vec<Pt>>>,
    /// A built-in typical B-H curve by name instead of `bh`: "mild-steel",
    /// "electrical-steel" or "mnzn-ferrite".
    #[serde(default)]
    pub bh_curve: Option<Spanned<String>>,
    /// A B-H curve from a CSV file (two columns H A/m, B T; an optional header line), the
    /// path relative to the case file.
    #[serde(default)]
    pub bh_file: Option<Spanned<String>>,
    /// Optional saturation flux density in T, for reporting core use against it.
    #[serde(default)]
    pub b_sat: Option<SNum>,
    /// Optional mass density in kg/m³, for the harvested power per gram.
    #[serde(default)]
    pub density: Option<SNum>,
}

with_shape_keys! {
    /// `[[part]]`.
    pub struct RawPart {
        pub name: Spanned<String>,
        pub material: Spanned<String>,
        #[serde(default)]
        pub mesh_size: Option<SNum>,
        /// Largest edge at the surface of a conductive part at f > 0 (default: a third of
        /// the skin depth).
        #[serde(default)]
        pub skin_mesh_size: Option<SNum>,
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RawConductorKind {
    Solid,
    Stranded,
}

with_shape_keys! {
    /// `[[conductor]]`.
    pub struct RawConductor {
        pub name: Spanned<String>,
        /// Default "copper".
        #[serde(default)]
        pub material: Option<Spanned<String>>,
        pub current: SNum,
        #[serde(default)]
        pub phase: Option<SNum>,
        /// Default "solid".
        #[serde(default)]
        pub kind: Option<Spanned<RawConductorKind>>,
        #[serde(default)]
        pub mesh_size: Option<SNum>,
        /// As for parts.
        #[serde(default)]
        pub skin_mesh_size: Option<SNum>,
    }
}

with_shape_keys! {
    /// One entry of a coil's `sides = [...]`.
    pub struct RawCoilSide {
        pub sense: SNum,
    }
}

with_shape_keys! {
    /// `[[coil]]`: one shape key, or `sides`.
    pub struct RawCoil {
        pub name: Spanned<String>,
        pub turns: SNum,
        #[serde(default)]
        pub wire: Option<Spanned<String>>,
        #[serde(default)]
        pub wire_diameter: Option<SNum>,
        #[serde(default)]
        pub fill_factor: Option<SNum>,
        #[serde(default)]
        pub temperature: Option<SNum>,
        #[serde(default)]
        pub current: Option<SNum>,
        #[serde(default)]
        pub phase: Option<SNum>,
        #[serde(default)]
        pub sides: Option<Spanned<Vec<Spanned<RawCoilSide>>>>,
        #[serde(default)]
        pub mesh_size: Option<SNum>,
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RawTuning {
    Series,
    Parallel,
    None,
}

/// `storage = { capacitance, voltage }`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStorage {
    pub capacitance: SNum,
    pub voltage: SNum,
}

/// `[circuit]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCircuit {
    /// Which coil the circuit belongs to (an addition to the contract); default: the only
    /// coil, or else the only coil with zero current.
    #[serde(default)]
    pub coil: Option<Spanned<String>>,
    /// Default "none".
    #[serde(default)]
    pub tuning: Option<Spanned<RawTuning>>,
    /// "matched" or a resistance in Ω (a number or an expression); default "matched".
    #[serde(default)]
    pub load: Option<SNum>,
    #[serde(default)]
    pub storage: Option<Spanned<RawStorage>>,
}

/// `line = { from, to, points }`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawLine {
    pub from: Pt,
    pub to: Pt,
    pub points: SNum,
}

/// `grid = { min, max, points = [nx, ny] }`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawGrid {
    pub min: Pt,
    pub max: Pt,
    pub points: Pt,
}

/// `[[probe]]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawProbe {
    pub name: Spanned<String>,
    #[serde(default)]
    pub line: Option<Spanned<RawLine>>,
    #[serde(default)]
    pub grid: Option<Spanned<RawGrid>>,
}

/// `[[sweep]]`: `values`, or `from`/`to`/`steps` (steps = number of values, ends included).
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSweep {
    pub parameter: Spanned<String>,
    #[serde(default)]
    pub values: Option<Spanned<Vec<SNum>>>,
    #[serde(default)]
    pub from: Option<SNum>,
    #[serde(default)]
    pub to: Option<SNum>,
    #[serde(default)]
    pub steps: Option<SNum>,
    /// Entries with the same group move together (zipped) instead of forming a grid.
    #[serde(default)]
    pub group: Option<Spanned<String>>,
}
