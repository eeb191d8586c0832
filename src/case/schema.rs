//! The case-file schema as data: every key the parser accepts, with its type, unit, default,
//! allowed values, an example and a one-line meaning.
//!
//! This table is the single source of `docs/case-reference.md` ([`reference_markdown`]) and of
//! `fluxpick explain KEY` ([`explain`]). `tests/case_reference.rs` keeps it honest: it walks
//! the serde structs of [`crate::case::raw`] and fails when the parser accepts a key that has
//! no entry here (or an entry names a key the parser does not accept, or a choice list
//! differs), and when the committed reference differs from what this module generates.
//!
//! Keys are dotted paths without array indices: `part.mesh_size` is `mesh_size` in any
//! `[[part]]`; `materials.NAME.mu_r` is `mu_r` in `[materials.ferrite]` or any other
//! material; `parameters.NAME` is any entry of `[parameters]`. The shape keys (`rect`,
//! `circle`, `ellipse`, `annulus`, `polygon` and their members) are listed once, in
//! [`SHAPE_KEYS`], and go in every table of [`SHAPE_OWNERS`].

use std::fmt::Write as _;

/// How a value is written, as the parser sees it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Type {
    /// A TOML table (`[model]`, `rect = { ... }`, or a table of named tables).
    Table,
    /// An array of tables: `[[part]]` headers, or `sides = [ { ... }, ... ]`.
    TableArray,
    /// A number, or a string holding an expression over `[parameters]`.
    Number,
    /// A whole number (or an expression that gives one).
    Whole,
    /// A free string.
    Text,
    /// A string from a fixed list ([`KeyDoc::choices`]).
    Choice,
    /// Two numbers (or expressions): `[x, y]`.
    Pair,
    /// An array of `[a, b]` pairs.
    PairList,
    /// An array of numbers (or expressions).
    NumberList,
    /// `"matched"` or a number (or expression).
    MatchedOrNumber,
}

impl Type {
    /// How the reference names the type.
    pub fn describe(self) -> &'static str {
        match self {
            Type::Table => "table",
            Type::TableArray => "array of tables",
            Type::Number => "number (or expression)",
            Type::Whole => "whole number (or expression)",
            Type::Text => "string",
            Type::Choice => "string, one of the allowed values",
            Type::Pair => "[a, b]: two numbers (or expressions)",
            Type::PairList => "array of [a, b] pairs",
            Type::NumberList => "array of numbers (or expressions)",
            Type::MatchedOrNumber => "\"matched\", or a number (or expression)",
        }
    }
}

/// One key of the case format.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct KeyDoc {
    /// Dotted path without indices (`part.mesh_size`, `materials.NAME.mu_r`); for shape
    /// keys, the path below the owner (`rect.min`).
    pub key: &'static str,
    pub ty: Type,
    /// Unit of the value ("" when it has none).
    pub unit: &'static str,
    /// The value when the key is absent, or "required".
    pub default: &'static str,
    /// What values are allowed (for [`Type::Choice`], generated from `choices`).
    pub allowed: &'static str,
    /// The allowed strings of a [`Type::Choice`]; empty otherwise.
    pub choices: &'static [&'static str],
    /// A line of TOML as it would appear in its table.
    pub example: &'static str,
    /// One line saying what the key means.
    pub meaning: &'static str,
}

const LEN: &str = "length unit (model.length_unit)";
const NUM: &str = "a number or an expression over [parameters], e.g. \"D/2 + 0.5\"";

const fn k(
    key: &'static str,
    ty: Type,
    unit: &'static str,
    default: &'static str,
    allowed: &'static str,
    example: &'static str,
    meaning: &'static str,
) -> KeyDoc {
    KeyDoc {
        key,
        ty,
        unit,
        default,
        allowed,
        choices: &[],
        example,
        meaning,
    }
}

const fn choice(
    key: &'static str,
    choices: &'static [&'static str],
    default: &'static str,
    example: &'static str,
    meaning: &'static str,
) -> KeyDoc {
    KeyDoc {
        key,
        ty: Type::Choice,
        unit: "",
        default,
        allowed: "",
        choices,
        example,
        meaning,
    }
}

/// Tables that take exactly one shape key (see [`SHAPE_KEYS`]).
pub const SHAPE_OWNERS: &[&str] = &["domain", "part", "conductor", "coil", "coil.sides"];

/// Every key of the case format except the shape keys, in reference order.
#[rustfmt::skip]
pub const KEYS: &[KeyDoc] = &[
    // [model]
    k("model", Type::Table, "", "required", "", "[model]",
      "What is modelled and how: symmetry, frequency, units, element order."),
    k("model.title", Type::Text, "", "none", "any text", "title = \"Ferrite rod, 1 uT axial\"",
      "A title printed at the top of summaries and results."),
    choice("model.symmetry", &["planar", "axisymmetric"], "required",
      "symmetry = \"axisymmetric\"",
      "planar: a cross-section of things infinitely long along z (depth sets the length reported); axisymmetric: bodies of revolution about the z axis, coordinates [r, z]."),
    k("model.frequency", Type::Number, "Hz", "0", ">= 0; the domain must be under a tenth of the free-space wavelength",
      "frequency = 50", "0 solves the magnetostatic field (DC values); 50 or 60 solves the time-harmonic field with eddy currents in conductive parts."),
    choice("model.length_unit", &["mm", "cm", "m", "in"], "\"mm\"", "length_unit = \"mm\"",
      "The unit of every length and coordinate in the file."),
    k("model.depth", Type::Number, LEN, "1 m (1000 with mm)", "> 0; planar models only",
      "depth = 200", "Length of the planar model along z: planar figures (flux linkage, EMF, inductance, losses) are for this length."),
    k("model.element_order", Type::Whole, "", "2", "1 or 2", "element_order = 2",
      "Finite elements of first (linear) or second (quadratic) order; 2 is more accurate per unknown."),
    k("model.accuracy", Type::Number, "relative error", "none (solve on one mesh)", "1e-6 to 0.5",
      "accuracy = 0.005", "Target relative error of the figures: the mesh is refined where the estimated error is largest until the target or max_triangles is reached."),
    k("model.max_triangles", Type::Whole, "triangles", "2000000", "100 to 5e7",
      "max_triangles = 500000", "Element budget of the accuracy loop (triangles of the domain); the loop stops there and says so."),
    choice("model.refinement", &["adaptive", "uniform"], "\"adaptive\"", "refinement = \"uniform\"",
      "How the accuracy loop refines: adaptive (where the estimated error is largest) or uniform (every element, for comparison)."),
    // [parameters]
    k("parameters", Type::Table, "", "none", "", "[parameters]",
      "Named numbers that other values may use in expressions, and that [[sweep]] varies."),
    k("parameters.NAME", Type::Number, "as used", "", "a name of letters, digits and _ (starting with a letter), not pi, sqrt, sin, cos, tan, abs, min or max; the value a number or an expression over other parameters",
      "L = 150", "A parameter: write its name in any number of the case, e.g. rect = { min = [0, \"-L/2\"], max = [\"D/2\", \"L/2\"] }."),
    // [domain]
    k("domain", Type::Table, "", "required", "exactly one shape: rect, or circle", "[domain]",
      "The air region that encloses everything; air wherever no part, conductor or coil says otherwise."),
    choice("domain.boundary", &["open", "fixed"], "\"open\"", "boundary = \"open\"",
      "open: the far field, as if the air went on forever (the usual choice); fixed: A held at the background field's potential (0 without one) on the outer boundary, like a perfect flux wall."),
    k("domain.mesh_size", Type::Number, LEN, "required", "> 0", "mesh_size = 40",
      "Largest element edge in the air far from everything; parts, conductors and coils may ask for finer."),
    // [[edge]]
    k("edge", Type::TableArray, "", "none", "rect domains only; at most one per side", "[[edge]]",
      "Another condition on one side of a rect domain, e.g. a symmetry plane so that only half is modelled."),
    choice("edge.side", &["left", "right", "bottom", "top"], "required", "side = \"bottom\"",
      "Which side of the rect domain; in an axisymmetric model never the axis side (r = 0)."),
    choice("edge.condition", &["flux-normal", "flux-parallel"], "required",
      "condition = \"flux-normal\"",
      "flux-normal: field lines cross the side at right angles (a symmetry plane of the field); flux-parallel: A held as for boundary = \"fixed\"."),
    // [background]
    k("background", Type::Table, "", "none", "", "[background]",
      "A uniform applied field, e.g. to characterise a pickup's equivalent area."),
    k("background.b", Type::Number, "T rms", "required", ">= 0", "b = 1.0e-6",
      "Flux density of the applied field (1 uT = 1.0e-6)."),
    k("background.direction", Type::Pair, "", "required", "not [0, 0]; axisymmetric models: axial only, [0, 1] or [0, -1]",
      "direction = [0, 1]", "Direction of the applied field in the model plane (normalised)."),
    k("background.phase", Type::Number, "degrees", "0", "any", "phase = 0",
      "Phase of the applied field against the conductors' currents."),
    // [materials.NAME]
    k("materials", Type::Table, "", "none (air, copper, aluminium are built in)", "", "[materials.ferrite]",
      "Materials by name; a table named air, copper or aluminium replaces the built-in one."),
    k("materials.NAME", Type::Table, "", "", "a name used by a part's or conductor's material", "[materials.ferrite]",
      "One material; every key in it is optional."),
    k("materials.NAME.mu_r", Type::Number, "", "1", "> 0", "mu_r = 2000",
      "Relative permeability (the initial, linear value; a B-H curve overrides it where given)."),
    k("materials.NAME.conductivity", Type::Number, "S/m", "0", ">= 0", "conductivity = 5e6",
      "Electrical conductivity: above 0, eddy currents flow in parts of this material at frequency > 0."),
    k("materials.NAME.bh", Type::PairList, "[H A/m, B T]", "none (linear)", "at least 3 points from [0, 0], H and B increasing; one of bh, bh_curve, bh_file",
      "bh = [[0, 0], [50, 0.3], [200, 1.2], [1000, 1.5]]", "A B-H curve: the material saturates (Newton solve at 0 Hz, an effective permeability at 50/60 Hz)."),
    k("materials.NAME.bh_curve", Type::Text, "", "none (linear)", "\"mild-steel\", \"electrical-steel\", \"mnzn-ferrite\"; one of bh, bh_curve, bh_file",
      "bh_curve = \"mild-steel\"", "A built-in typical B-H curve instead of bh points."),
    k("materials.NAME.bh_file", Type::Text, "", "none (linear)", "a CSV file of two columns, H in A/m and B in T (an optional header line), the path relative to the case file; one of bh, bh_curve, bh_file",
      "bh_file = \"steel-bh.csv\"", "A B-H curve read from a file."),
    k("materials.NAME.b_sat", Type::Number, "T", "none", "> 0", "b_sat = 0.4",
      "Saturation flux density, to report each part's peak and mean |B| against it."),
    k("materials.NAME.density", Type::Number, "kg/m³", "none (built-ins have one)", "> 0", "density = 4800",
      "Mass density, for the core mass and the harvested power per gram."),
    // [[part]]
    k("part", Type::TableArray, "", "none", "one shape per part", "[[part]]",
      "A passive region: a core, steel, a shield, a spacer. Later entries are drawn over earlier ones."),
    k("part.name", Type::Text, "", "required", "not empty; unique among parts, conductors and coils", "name = \"core\"",
      "The name results and pictures use."),
    k("part.material", Type::Text, "", "required", "air, copper, aluminium or a [materials.NAME]", "material = \"ferrite\"",
      "The part's material."),
    k("part.mesh_size", Type::Number, LEN, "the domain's mesh_size", "> 0", "mesh_size = 1.5",
      "Largest element edge inside the part."),
    k("part.skin_mesh_size", Type::Number, LEN, "a third of the skin depth (a sixth with element_order = 1)", "> 0",
      "skin_mesh_size = 0.5", "Largest element edge at the surface of a conductive part when eddy currents flow."),
    // [[conductor]]
    k("conductor", Type::TableArray, "", "none", "one shape per conductor; conductors and coils must not overlap", "[[conductor]]",
      "A region with an imposed total current: a busbar, a cable core, a feeder."),
    k("conductor.name", Type::Text, "", "required", "not empty; unique among parts, conductors and coils", "name = \"feeder\"",
      "The name results and pictures use."),
    k("conductor.material", Type::Text, "", "\"copper\"", "air, copper, aluminium or a [materials.NAME]", "material = \"aluminium\"",
      "The conductor's material (its conductivity matters for solid conductors at f > 0)."),
    k("conductor.current", Type::Number, "A rms (DC value at 0 Hz)", "required", "any; negative for a return conductor",
      "current = 400", "Total current through the conductor's cross-section."),
    k("conductor.phase", Type::Number, "degrees", "0", "any", "phase = -120",
      "Phase of the current (three-phase sets: 0, -120, 120)."),
    choice("conductor.kind", &["solid", "stranded"], "\"solid\"", "kind = \"solid\"",
      "solid: one piece of metal, with skin and proximity effects at f > 0; stranded: a uniform current density (litz, many fine strands)."),
    k("conductor.mesh_size", Type::Number, LEN, "the domain's mesh_size", "> 0", "mesh_size = 2",
      "Largest element edge inside the conductor."),
    k("conductor.skin_mesh_size", Type::Number, LEN, "a third of the skin depth (a sixth with element_order = 1)", "> 0",
      "skin_mesh_size = 0.5", "Largest element edge at the conductor's surface when eddy currents flow."),
    // [[coil]]
    k("coil", Type::TableArray, "", "none", "axisymmetric: one shape (the winding window); planar: sides", "[[coil]]",
      "A winding whose flux linkage, EMF, inductance, resistance and circuit figures are reported."),
    k("coil.name", Type::Text, "", "required", "not empty; unique among parts, conductors and coils", "name = \"pickup\"",
      "The name results use (coils.NAME.emf_v ...)."),
    k("coil.turns", Type::Number, "turns", "required", "> 0", "turns = 9000",
      "Number of turns."),
    k("coil.wire", Type::Text, "", "none; wire or wire_diameter is required", "\"awgNN\" with NN from 10 to 44", "wire = \"awg30\"",
      "Wire gauge (bare copper diameter from the ASTM B258 table)."),
    k("coil.wire_diameter", Type::Number, LEN, "none; wire or wire_diameter is required", "> 0", "wire_diameter = 0.25",
      "Bare copper wire diameter, instead of a gauge."),
    k("coil.fill_factor", Type::Number, "", "0.6", "above 0, at most 1", "fill_factor = 0.6",
      "Copper area / window area; the window must hold the turns at this factor. Typically 0.5 to 0.7 for round wire."),
    k("coil.temperature", Type::Number, "°C", "20", "above -273.15", "temperature = 40",
      "Winding temperature, for the copper resistance."),
    k("coil.current", Type::Number, "A rms (DC value at 0 Hz)", "0", "any", "current = 0.5",
      "0 for an open-circuit pickup; non-zero for a driven winding."),
    k("coil.phase", Type::Number, "degrees", "0", "any", "phase = 0",
      "Phase of a driven winding's current."),
    k("coil.sides", Type::TableArray, "", "none; planar coils need sides", "at least one side with sense = 1 and one with sense = -1 (planar)",
      "sides = [ { rect = { min = [0, 5], max = [40, 9] }, sense = 1 }, { rect = { min = [0, -9], max = [40, -5] }, sense = -1 } ]",
      "The winding's cross-sections in a planar model: every turn goes in through the sense = 1 side and comes back through the sense = -1 side."),
    k("coil.sides.sense", Type::Number, "", "required", "1 or -1", "sense = -1",
      "1 where the turns' current goes in (+z), -1 where it comes back."),
    k("coil.mesh_size", Type::Number, LEN, "the domain's mesh_size", "> 0", "mesh_size = 2",
      "Largest element edge inside the winding."),
    // [circuit]
    k("circuit", Type::Table, "", "none", "", "[circuit]",
      "How one coil is used: tuning, load and an optional storage capacitor."),
    k("circuit.coil", Type::Text, "", "the only coil, or else the only coil with zero current", "the name of a [[coil]]",
      "coil = \"pickup\"", "Which coil the circuit belongs to."),
    choice("circuit.tuning", &["series", "parallel", "none"], "\"none\"", "tuning = \"series\"",
      "How the coil is resonated at the frequency: series or parallel capacitor, or not at all."),
    k("circuit.load", Type::MatchedOrNumber, "Ω", "\"matched\"", "\"matched\" or > 0", "load = 1000",
      "The load: matched (power figures at the matched load) or a resistance."),
    k("circuit.storage", Type::Table, "", "none", "", "storage = { capacitance = 0.1, voltage = 3.3 }",
      "A storage capacitor: the summary says how long the matched power takes to charge it."),
    k("circuit.storage.capacitance", Type::Number, "F", "required", "> 0", "capacitance = 0.1",
      "Capacitance of the storage capacitor."),
    k("circuit.storage.voltage", Type::Number, "V", "required", "> 0", "voltage = 3.3",
      "Voltage to charge it to."),
    // [[probe]]
    k("probe", Type::TableArray, "", "none", "one of line, grid", "[[probe]]",
      "Field samples written to results (probes.NAME.b_t) and used by placement maps."),
    k("probe.name", Type::Text, "", "required", "unique among probes", "name = \"axis\"",
      "The name results use."),
    k("probe.line", Type::Table, "", "none; line or grid is required", "", "line = { from = [0, -300], to = [0, 300], points = 121 }",
      "Samples along a straight line."),
    k("probe.line.from", Type::Pair, LEN, "required", "", "from = [0, -300]", "Start of the line."),
    k("probe.line.to", Type::Pair, LEN, "required", "not equal to from", "to = [0, 300]", "End of the line."),
    k("probe.line.points", Type::Whole, "", "required", ">= 2", "points = 121",
      "Number of samples, both ends included."),
    k("probe.grid", Type::Table, "", "none; line or grid is required", "", "grid = { min = [-150, 40], max = [150, 190], points = [31, 16] }",
      "Samples on a rectangular grid."),
    k("probe.grid.min", Type::Pair, LEN, "required", "", "min = [-150, 40]", "Lower-left corner."),
    k("probe.grid.max", Type::Pair, LEN, "required", "larger than min in both coordinates", "max = [150, 190]", "Upper-right corner."),
    k("probe.grid.points", Type::Pair, "", "required", "whole numbers >= 2", "points = [31, 16]",
      "Number of samples along x and y, edges included."),
    // [[sweep]]
    k("sweep", Type::TableArray, "", "none", "values, or from, to and steps", "[[sweep]]",
      "A parameter to vary in `fluxpick sweep`; several entries form a grid (or move together with group)."),
    k("sweep.parameter", Type::Text, "", "required", "a [parameters] name, swept by one entry only", "parameter = \"L\"",
      "The parameter to vary."),
    k("sweep.values", Type::NumberList, "the parameter's", "none", "at least one value", "values = [50, 100, 150, 200]",
      "The values to try."),
    k("sweep.from", Type::Number, "the parameter's", "none", "with to and steps", "from = 50", "First value of an evenly spaced range."),
    k("sweep.to", Type::Number, "the parameter's", "none", "with from and steps", "to = 200", "Last value of the range."),
    k("sweep.steps", Type::Whole, "", "none", ">= 2, with from and to", "steps = 7",
      "Number of values in the range, both ends included."),
    k("sweep.group", Type::Text, "", "none (a grid)", "any name; every sweep of a group has the same number of values",
      "group = \"volume\"", "Sweeps with the same group move together (their k-th values form one point) instead of forming a grid."),
];

/// The shape keys, valid in every table of [`SHAPE_OWNERS`] (exactly one shape per table).
#[rustfmt::skip]
pub const SHAPE_KEYS: &[KeyDoc] = &[
    k("rect", Type::Table, "", "none; exactly one shape key", "min and max, or center and size",
      "rect = { min = [0, -75], max = [12.5, 75] }",
      "A rectangle with sides along the axes."),
    k("rect.min", Type::Pair, LEN, "none", "smaller than max in both coordinates", "min = [0, -75]", "Lower-left corner ([x, y], or [r, z] axisymmetric)."),
    k("rect.max", Type::Pair, LEN, "none", "larger than min in both coordinates", "max = [12.5, 75]", "Upper-right corner."),
    k("rect.center", Type::Pair, LEN, "none", "with size, instead of min and max", "center = [150, 0]", "Centre of the rectangle."),
    k("rect.size", Type::Pair, LEN, "none", "> 0 both", "size = [100, 10]", "Width and height."),
    k("circle", Type::Table, "", "none; exactly one shape key", "", "circle = { center = [0, -250], radius = 8 }",
      "A circle (axisymmetric: centred on the axis it is a sphere)."),
    k("circle.center", Type::Pair, LEN, "required", "axisymmetric domain: on the axis", "center = [0, -250]", "Centre."),
    k("circle.radius", Type::Number, LEN, "required", "> 0", "radius = 8", "Radius."),
    k("ellipse", Type::Table, "", "none; exactly one shape key", "", "ellipse = { center = [0, 0], semi_axes = [12.5, 75] }",
      "An ellipse with axes along x and y (axisymmetric: centred on the axis it is a spheroid)."),
    k("ellipse.center", Type::Pair, LEN, "required", "", "center = [0, 0]", "Centre."),
    k("ellipse.semi_axes", Type::Pair, LEN, "required", "> 0 both", "semi_axes = [12.5, 75]", "Half-widths along x (r) and y (z)."),
    k("annulus", Type::Table, "", "none; exactly one shape key", "", "annulus = { center = [0, 0], inner = 20, outer = 25 }",
      "A ring between two concentric circles (a tube wall, a cable sheath)."),
    k("annulus.center", Type::Pair, LEN, "required", "", "center = [0, 0]", "Centre."),
    k("annulus.inner", Type::Number, LEN, "required", "> 0", "inner = 20", "Inner radius."),
    k("annulus.outer", Type::Number, LEN, "required", "> inner", "outer = 25", "Outer radius."),
    k("polygon", Type::PairList, LEN, "none; exactly one shape key", "at least 3 corners in order, edges not crossing",
      "polygon = [[0, 0], [40, 0], [40, 5], [0, 5]]", "A polygon by its corners (the first may be repeated at the end)."),
];

/// Every entry: [`KEYS`] then [`SHAPE_KEYS`].
pub fn all() -> impl Iterator<Item = &'static KeyDoc> {
    KEYS.iter().chain(SHAPE_KEYS)
}

fn is_shape_key(k: &str) -> bool {
    SHAPE_KEYS.iter().any(|d| d.key == k)
}

/// The entry for a dotted key path as the parser sees it (no indices, `NAME` for user names),
/// shape keys under any owner included: `part.rect.min` finds [`SHAPE_KEYS`]' `rect.min`.
pub fn entry(path: &str) -> Option<&'static KeyDoc> {
    if let Some(d) = KEYS.iter().find(|d| d.key == path) {
        return Some(d);
    }
    for owner in SHAPE_OWNERS {
        if let Some(rest) = path.strip_prefix(owner).and_then(|r| r.strip_prefix('.')) {
            let first = rest.split('.').next().unwrap_or("");
            if is_shape_key(first) {
                return SHAPE_KEYS.iter().find(|d| d.key == rest);
            }
        }
    }
    SHAPE_KEYS.iter().find(|d| d.key == path)
}

/// Turns what a user types into a schema path: drops `[[ ]]`/`[ ]` around tables and array
/// indices, and maps user names to `NAME` (`materials.ferrite.mu_r` → `materials.NAME.mu_r`).
pub fn normalise(query: &str) -> String {
    let q = query.trim().trim_start_matches('[').trim_end_matches(']');
    let mut out = String::new();
    let mut depth = 0;
    for ch in q.chars() {
        match ch {
            '[' => depth += 1,
            ']' => depth -= 1,
            _ if depth > 0 => {}
            _ => out.push(ch),
        }
    }
    let mut segs: Vec<String> = out
        .split('.')
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .collect();
    if segs.len() >= 2 && (segs[0] == "materials" || segs[0] == "parameters") {
        segs[1] = "NAME".into();
    }
    segs.join(".")
}

/// What `explain` found for a query.
#[derive(Debug)]
pub enum Lookup {
    /// One or more entries (a bare leaf name such as `mesh_size` may match several tables).
    Found(Vec<&'static KeyDoc>),
    /// Nothing; the nearest key, if one is close.
    NotFound(Option<&'static str>),
}

/// Looks a key up as a user would type it: a full path (`model.accuracy`, `[[part]]`,
/// `part[1].circle.radius`, `materials.ferrite.mu_r`) or a bare leaf name (`mesh_size`).
pub fn lookup(query: &str) -> Lookup {
    let path = normalise(query);
    if let Some(d) = entry(&path) {
        return Lookup::Found(vec![d]);
    }
    let leaf: Vec<&'static KeyDoc> = all()
        .filter(|d| d.key.rsplit('.').next() == Some(path.as_str()))
        .collect();
    if !leaf.is_empty() {
        return Lookup::Found(leaf);
    }
    let mut names: Vec<&'static str> = all().map(|d| d.key).collect();
    names.extend(all().filter_map(|d| d.key.rsplit('.').next()));
    let near = crate::case::error::nearest(&path, names.iter().copied()).and_then(|n| {
        // Offer the full key of a leaf name.
        all()
            .map(|d| d.key)
            .find(|k| *k == n || k.ends_with(&format!(".{n}")))
    });
    Lookup::NotFound(near)
}

/// Where a key is written: `[model]`, `[[part]]`, `[materials.NAME]`, `[[coil]] → sides`.
pub fn location(d: &KeyDoc) -> String {
    if is_shape_key(d.key.split('.').next().unwrap_or("")) {
        return "[domain], [[part]], [[conductor]], [[coil]] or an entry of a coil's sides \
                (one shape per table)"
            .to_string();
    }
    let segs: Vec<&str> = d.key.split('.').collect();
    let table = |name: &str| match KEYS.iter().find(|k| k.key == name).map(|k| k.ty) {
        Some(Type::TableArray) => format!("[[{name}]]"),
        _ => format!("[{name}]"),
    };
    match segs.as_slice() {
        [_] => "top level".to_string(),
        ["materials", "NAME"] | ["parameters", "NAME"] => table(segs[0]),
        ["materials", "NAME", _] => "[materials.NAME]".to_string(),
        [top, _] => table(top),
        [top, mid, ..] => format!("{} → {mid}", table(top)),
        [] => String::new(),
    }
}

/// The labelled lines of one entry, shared by the Markdown reference and the terminal so that
/// the two cannot say different things.
pub fn entry_lines(d: &KeyDoc) -> Vec<(&'static str, String)> {
    let allowed = if d.ty == Type::Choice {
        d.choices
            .iter()
            .map(|c| format!("\"{c}\""))
            .collect::<Vec<_>>()
            .join(", ")
    } else if d.allowed.is_empty() {
        "-".to_string()
    } else {
        d.allowed.to_string()
    };
    vec![
        ("in", location(d)),
        ("type", d.ty.describe().to_string()),
        (
            "unit",
            if d.unit.is_empty() {
                "-".into()
            } else {
                d.unit.into()
            },
        ),
        (
            "default",
            if d.default.is_empty() {
                "-".into()
            } else {
                d.default.into()
            },
        ),
        ("allowed", allowed),
        ("example", d.example.to_string()),
    ]
}

/// One entry as `fluxpick explain` prints it.
pub fn render_terminal(d: &KeyDoc) -> String {
    let mut s = format!("{}\n  {}\n", d.key, d.meaning);
    for (label, value) in entry_lines(d) {
        let _ = writeln!(s, "  {:<8} {value}", format!("{label}:"));
    }
    if matches!(
        d.ty,
        Type::Number | Type::Whole | Type::Pair | Type::NumberList
    ) {
        let _ = writeln!(s, "  {:<8} {NUM}", "numbers:");
    }
    s
}

fn md_escape(s: &str) -> String {
    s.replace('|', "\\|")
}

fn anchor(key: &str) -> String {
    key.to_lowercase()
        .chars()
        .filter(|c| c.is_alphanumeric() || *c == '_' || *c == '-' || *c == ' ')
        .collect()
}

fn md_entry(out: &mut String, d: &KeyDoc, heading: &str) {
    let _ = writeln!(out, "### `{heading}`\n\n{}\n", d.meaning);
    for (label, value) in entry_lines(d) {
        let v = if label == "example" {
            format!("`{value}`")
        } else {
            md_escape(&value)
        };
        let _ = writeln!(out, "- {label}: {v}");
    }
    out.push('\n');
}

/// The whole case-file reference (docs/case-reference.md), generated from this table.
pub fn reference_markdown() -> String {
    let mut out = String::new();
    out.push_str(
        "# Case-file reference\n\n\
         <!-- Generated from src/case/schema.rs by tests/case_reference.rs: do not edit by hand.\n     \
         Regenerate with FLUXPICK_BLESS=1 cargo test --release --test case_reference. -->\n\n\
         Every key a fluxpick case file accepts. A case is one TOML file; unknown keys are an \
         error. `fluxpick explain KEY` prints any entry below in the terminal, and \
         `fluxpick new KIND` writes a commented starter case.\n\n\
         Keys are written as dotted paths without array indices: `part.mesh_size` is \
         `mesh_size` in any `[[part]]` table, `materials.NAME.mu_r` is `mu_r` in \
         `[materials.ferrite]` or any other material, and `parameters.NAME` is any entry of \
         `[parameters]`.\n\n\
         **Numbers.** Wherever a number is expected you may write a string holding an \
         expression over `[parameters]`: `\"D/2 + 0.5\"`, `\"-L/2\"`, `\"sqrt(A/pi)\"`, with \
         `+ - * / ^`, parentheses, `pi`, `sqrt`, `sin`, `cos`, `tan` (radians), `abs`, \
         `min(a, b)`, `max(a, b)`.\n\n\
         **Units.** Lengths and coordinates in `model.length_unit` (default mm); flux density \
         in T rms; currents in A rms (DC values at 0 Hz); frequency in Hz; conductivity in \
         S/m; angles in degrees; temperature in °C; capacitance in F; resistance in Ω. Planar \
         coordinates are `[x, y]`, axisymmetric ones `[r, z]` with r ≥ 0.\n\n",
    );
    out.push_str("## Contents\n\n");
    let tops: Vec<&KeyDoc> = KEYS.iter().filter(|d| !d.key.contains('.')).collect();
    for t in &tops {
        let _ = writeln!(out, "- [`{}`](#{})", t.key, anchor(t.key));
    }
    out.push_str("- [Shapes](#shapes)\n\n");
    for t in &tops {
        let head = match t.ty {
            Type::TableArray => format!("[[{}]]", t.key),
            _ if t.key == "materials" => "[materials.NAME]".to_string(),
            _ => format!("[{}]", t.key),
        };
        let _ = writeln!(out, "## {}\n\n<a id=\"{}\"></a>\n", head, anchor(t.key));
        if SHAPE_OWNERS.contains(&t.key) {
            let _ = writeln!(
                out,
                "Takes exactly one [shape](#shapes) key: {}.\n",
                if t.key == "domain" {
                    "`rect` or `circle`"
                } else {
                    "`rect`, `circle`, `ellipse`, `annulus` or `polygon`"
                }
            );
        }
        for d in KEYS
            .iter()
            .filter(|d| d.key == t.key || d.key.starts_with(&format!("{}.", t.key)))
        {
            md_entry(&mut out, d, d.key);
        }
    }
    out.push_str(
        "## Shapes\n\n<a id=\"shapes\"></a>\n\nExactly one of these keys goes in each \
         `[domain]` (rect or circle only), `[[part]]`, `[[conductor]]`, `[[coil]]` \
         (axisymmetric: the winding window) and each entry of a planar coil's `sides`. Later \
         entries are drawn over earlier ones where they overlap (parts, then conductors, then \
         coils); shapes may touch and share edges.\n\n",
    );
    for d in SHAPE_KEYS {
        md_entry(&mut out, d, d.key);
    }
    out
}

/// A list of every key with its meaning, for `fluxpick explain` without a key.
pub fn key_list() -> String {
    let mut s = String::new();
    for d in all() {
        let shown = if is_shape_key(d.key.split('.').next().unwrap_or("")) {
            format!("(shape) {}", d.key)
        } else {
            d.key.to_string()
        };
        let _ = writeln!(s, "{shown:<32} {}", d.meaning);
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_are_unique() {
        let mut seen = std::collections::BTreeSet::new();
        for d in all() {
            assert!(seen.insert(d.key), "{} listed twice", d.key);
        }
    }

    #[test]
    fn user_spellings_find_entries() {
        let one = |q: &str| match lookup(q) {
            Lookup::Found(v) if v.len() == 1 => v[0].key,
            other => panic!("{q}: {other:?}"),
        };
        assert_eq!(one("model.accuracy"), "model.accuracy");
        assert_eq!(one("[[part]]"), "part");
        assert_eq!(one("part[1].circle.radius"), "circle.radius");
        assert_eq!(one("materials.ferrite.mu_r"), "materials.NAME.mu_r");
        assert_eq!(one("coil.sides[0].rect.min"), "rect.min");
        assert_eq!(one("max_triangles"), "model.max_triangles");
        match lookup("mesh_size") {
            Lookup::Found(v) => assert_eq!(v.len(), 4, "{v:?}"),
            other => panic!("{other:?}"),
        }
        match lookup("model.acuracy") {
            Lookup::NotFound(Some(n)) => assert_eq!(n, "model.accuracy"),
            other => panic!("{other:?}"),
        }
        match lookup("fill_factr") {
            Lookup::NotFound(Some(n)) => assert_eq!(n, "coil.fill_factor"),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn choices_are_listed_as_allowed_values() {
        let d = entry("model.symmetry").unwrap();
        let lines = entry_lines(d);
        let allowed = &lines.iter().find(|l| l.0 == "allowed").unwrap().1;
        assert_eq!(allowed, "\"planar\", \"axisymmetric\"");
    }
}
