//! Integration tests of case loading (`fluxpick::case`): the library, not the binary.
//!
//! Physics values used here: AWG 30 bare diameter 0.25464 mm (ASTM B258, via
//! docs/references.md); built-in conductivities copper 5.8e7 S/m and aluminium 3.5e7 S/m
//! (typical values, no source); 1 in = 25.4 mm (definition).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use fluxpick::case::*;

/// The example in docs/case-format.md, verbatim (checked by
/// `contract_example_is_the_one_in_docs`): it must be accepted as written.
const CONTRACT: &str = r#"
[model]
title = "Ferrite rod, uniform axial field"
symmetry = "axisymmetric"   # "planar" | "axisymmetric"
frequency = 0               # Hz; 0 = magnetostatic
length_unit = "mm"          # "mm" | "cm" | "m" | "in"
depth = 1000                # planar only: extent along the conductors (length units); default 1 m
element_order = 2           # 1 | 2; default 2

[parameters]                # free names for expressions and sweeps
L = 150
D = 25

[domain]                    # the air region enclosing everything; air where no part says otherwise
rect = { min = [0, -600], max = [600, 600] }   # or circle = { center, radius } (planar)
boundary = "open"           # "open" (far field: as if the air went on forever) | "fixed" (A held at
                            # the background field's potential on the outer boundary; 0 without one)
mesh_size = 40              # largest element edge in air far away (length units)

[[edge]]                    # optional: another condition on one side of a rect domain
side = "bottom"             # "left" | "right" | "bottom" | "top" (axisymmetric: never the axis side)
condition = "flux-normal"   # "flux-normal": field lines cross at right angles (symmetry plane,
                            # natural condition) | "flux-parallel": A held as `boundary = "fixed"`

[background]                # optional uniform applied field
b = 1.0e-6                  # T rms
direction = [0, 1]          # planar: any in-plane direction; axisymmetric: axial only ([0, 1])
phase = 0

[materials.ferrite]         # "air", "copper", "aluminium" are built in (typical values; say so)
mu_r = 2000
conductivity = 0.0          # default 0
# bh = [[0, 0], [50, 0.3], [200, 1.2], [1000, 1.5]]   # optional B-H curve: H in A/m, B in T

[[part]]                    # passive regions: cores, steel, shields, spacers
name = "core"
material = "ferrite"
rect = { min = [0, "-L/2"], max = ["D/2", "L/2"] }   # exactly one shape key, see below
mesh_size = 1.5             # optional, largest element edge inside (length units)

[[conductor]]               # regions with an imposed total current
name = "feeder"
material = "copper"
circle = { center = [0, -250], radius = 8 }
current = 400               # A rms (DC value when frequency = 0)
phase = 0
kind = "solid"              # "solid" (eddy currents and skin effect at f > 0) | "stranded" (uniform)
mesh_size = 1.0             # optional, as for parts (also on coils)

[[coil]]                    # windings whose flux linkage and circuit figures are reported
name = "pickup"
turns = 9000
wire = "awg30"              # "awgNN" (ASTM B258 bare diameter) or wire_diameter = 0.25 (length units)
fill_factor = 0.6           # copper area / window area; used to check the winding fits
temperature = 20
current = 0                 # A rms; 0 = open-circuit pickup; non-zero = driven winding
rect = { min = ["D/2 + 0.5", "-L/2 + 5"], max = ["D/2 + 8", "L/2 - 5"] }   # axisymmetric: one window
# planar: two sides instead of one shape, current going in (+1) and coming back (-1):
# sides = [ { rect = { ... }, sense = 1 }, { rect = { ... }, sense = -1 } ]

[circuit]                   # optional: how the coil is used
tuning = "series"           # "series" | "parallel" | "none"
load = "matched"            # "matched" or a resistance in Ω
storage = { capacitance = 0.1, voltage = 3.3 }

[[probe]]                   # field samples written to results
name = "axis"
line = { from = [0, -300], to = [0, 300], points = 121 }
# or grid = { min = [..], max = [..], points = [nx, ny] }

[[sweep]]                   # each entry varies one parameter; several entries form a grid
parameter = "L"
values = [50, 100, 150, 200]   # or from = 50, to = 200, steps = 7
"#;

/// A small valid planar case that the error tests break one line at a time.
const PLANAR: &str = r#"[model]
title = "base"
symmetry = "planar"
frequency = 50

[parameters]
R = 5
W = 30

[domain]
rect = { min = [-100, -100], max = [100, 100] }
mesh_size = 10

[materials.ferrite]
mu_r = 1000

[[part]]
name = "core"
material = "ferrite"
rect = { min = [-20, -3], max = [20, 3] }

[[conductor]]
name = "bar"
circle = { center = [0, -50], radius = "R" }
current = 100

[[coil]]
name = "pickup"
turns = 100
wire = "awg30"
sides = [
  { rect = { min = ["-W/2", 3.5], max = ["W/2", 6] }, sense = 1 },
  { rect = { min = ["-W/2", -6], max = ["W/2", -3.5] }, sense = -1 },
]

[[probe]]
name = "line"
line = { from = [-50, 20], to = [50, 20], points = 11 }

[[sweep]]
parameter = "R"
values = [3, 5, 8]
"#;

/// A small valid axisymmetric case.
const AXI: &str = r#"[model]
symmetry = "axisymmetric"

[parameters]
L = 40

[domain]
rect = { min = [0, -100], max = [100, 100] }
mesh_size = 10

[background]
b = 1e-6
direction = [0, 1]

[materials.ferrite]
mu_r = 1000

[[part]]
name = "rod"
material = "ferrite"
rect = { min = [0, "-L/2"], max = [4, "L/2"] }

[[coil]]
name = "pickup"
turns = 200
wire = "awg30"
rect = { min = [4.5, -15], max = [7, 15] }
"#;

/// The case's material of that name (the case holds them by id).
fn material<'a>(c: &'a Case, name: &str) -> &'a Material {
    c.material(c.find_material(name).expect("the material is defined"))
}

fn ok(text: &str) -> Case {
    match load_case_str("good.toml", text) {
        Ok(c) => c,
        Err(e) => panic!("expected a valid case:\n{}", e.render_plain()),
    }
}

/// `base` with the first `from` replaced by `to` (which must occur), expected to fail.
fn broken(base: &str, from: &str, to: &str) -> (CaseError, String) {
    assert!(
        base.contains(from),
        "test set-up: {from:?} not in the base case"
    );
    let text = base.replacen(from, to, 1);
    match load_case_str("bad.toml", &text) {
        Ok(_) => panic!("expected an error after replacing {from:?} by {to:?}"),
        Err(e) => (e, text),
    }
}

/// 1-based line of the first occurrence of `needle` in `text`.
fn line_of(text: &str, needle: &str) -> usize {
    let pos = text
        .find(needle)
        .unwrap_or_else(|| panic!("{needle:?} not in text"));
    text[..pos].matches('\n').count() + 1
}

/// Asserts kind, key path, and that both `line_col` and the rendered report point at the
/// line holding `needle`.
fn expect(e: &CaseError, text: &str, kind: CaseErrorKind, key: &str, needle: &str) {
    let rendered = e.render_plain();
    assert_eq!(e.kind, kind, "{rendered}");
    assert_eq!(e.key, key, "{rendered}");
    let line = line_of(text, needle);
    let (l, c) = e.line_col().expect("a span");
    assert_eq!(l, line, "{rendered}");
    assert!(
        rendered.contains(&format!("bad.toml:{l}:{c}")),
        "{rendered}"
    );
    assert!(rendered.contains(key), "{rendered}");
    assert!(e.to_string().contains(key), "{e}");
    assert!(
        e.help_text().is_some_and(|h| !h.is_empty()),
        "no help: {rendered}"
    );
}

// ---------------------------------------------------------------------------------------
// valid cases

/// The contract's example here is the first TOML block of docs/case-format.md, so that the
/// document and the test cannot drift apart.
#[test]
fn contract_example_is_the_one_in_docs() {
    let doc =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/case-format.md"))
            .expect("docs/case-format.md");
    let start = doc.find("```toml\n").expect("a TOML block") + "```toml\n".len();
    let block = &doc[start..start + doc[start..].find("```").expect("end of the block")];
    assert_eq!(block.trim(), CONTRACT.trim());
}

#[test]
fn contract_example_is_accepted_as_written() {
    let c = ok(CONTRACT);
    assert_eq!(c.symmetry, Symmetry::Axisymmetric);
    assert_eq!(c.element_order, Order::Quadratic);
    assert_eq!(
        c.parts[0].shape,
        Shape::Rect {
            min: [0.0, -0.075],
            max: [0.0125, 0.075]
        }
    );
    let coil = &c.coils[0];
    assert_eq!(coil.wire.awg, Some(30));
    // ASTM B258: AWG 30 = 0.25464 mm bare.
    assert!((coil.wire.diameter - 0.25464e-3).abs() < 1e-8);
    let CoilWindow::Single(Shape::Rect { min, max }) = &coil.window else {
        panic!()
    };
    assert!((min[0] - 0.013).abs() < 1e-12 && (min[1] + 0.070).abs() < 1e-12);
    assert!((max[0] - 0.0205).abs() < 1e-12 && (max[1] - 0.070).abs() < 1e-12);
    assert_eq!(
        c.domain.edges,
        vec![(DomainSide::Bottom, EdgeKind::FluxNormal)]
    );
    let circuit = c.circuit.as_ref().unwrap();
    assert_eq!(
        (
            c.coil(circuit.coil).name.as_str(),
            circuit.tuning,
            circuit.load
        ),
        ("pickup", Tuning::Series, Load::Matched)
    );
    assert_eq!(
        circuit.storage,
        Some(Storage {
            capacitance: 0.1,
            voltage: 3.3
        })
    );
    assert_eq!(
        c.sweeps,
        vec![Sweep {
            parameter: "L".into(),
            values: vec![50.0, 100.0, 150.0, 200.0],
            group: None,
        }]
    );
    assert_eq!(
        c.probes[0].kind,
        ProbeKind::Line {
            from: [0.0, -0.3],
            to: [0.0, 0.3],
            points: 121
        }
    );
    // Its sweep reaches L = 50 and 100, where the 9000 turns no longer fit the shortened
    // window (405 mm² × 0.6 < 458 mm² at L = 100): reported by check_sweep_points, not by
    // resolve.
    let raw = parse_str("contract.toml", CONTRACT).unwrap();
    let errs = check_sweep_points(&raw, &SourceInfo::new("contract.toml", CONTRACT), &c);
    assert_eq!(errs.len(), 2);
    assert!(errs
        .iter()
        .all(|e| e.kind == CaseErrorKind::WindingDoesNotFit));
    assert!(
        errs[0].message.starts_with("at sweep point L = 50:"),
        "{}",
        errs[0].message
    );
    assert!(
        errs[1].message.starts_with("at sweep point L = 100:"),
        "{}",
        errs[1].message
    );
}

/// A path in the repository.
fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

fn example_cases() -> Vec<PathBuf> {
    let dir = repo("cases");
    let mut v: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("cases/ exists")
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    v.sort();
    v
}

#[test]
fn every_example_case_loads_and_summarises() {
    let cases = example_cases();
    assert!(cases.len() >= 4, "{cases:?}");
    for path in cases {
        let case = match load_case(&path) {
            Ok(c) => c,
            Err(e) => panic!("{}", e.render_plain()),
        };
        let text = summary(&case);
        assert!(text.contains(&case.title), "{text}");
        for c in &case.coils {
            assert!(text.contains(&c.name), "{text}");
        }
        // Modest meshes: these cases become CI tests.
        let n = estimated_elements(&case);
        assert!(
            n > 500.0 && n < 60_000.0,
            "{}: about {n} elements",
            path.display()
        );
        // The raw case resolves again with every sweep value overridden.
        let (raw, src_text) = load(&path).unwrap();
        let src = SourceInfo::new(path.display().to_string(), src_text);
        assert!(check_sweep_points(&raw, &src, &case).is_empty());
        for sw in &case.sweeps {
            for v in &sw.values {
                let o = BTreeMap::from([(sw.parameter.clone(), *v)]);
                let c2 = resolve(&raw, &src, &o).unwrap();
                assert_eq!(c2.parameters[&sw.parameter], *v);
            }
        }
    }
}

#[test]
fn example_rod_figures() {
    let c = load_case(&repo("cases/rod-uniform-field.toml")).unwrap();
    assert_eq!(c.symmetry, Symmetry::Axisymmetric);
    assert_eq!(
        c.parts[0].shape,
        Shape::Rect {
            min: [0.0, -0.075],
            max: [0.0125, 0.075]
        }
    );
    assert_eq!(c.coils[0].turns, 9000.0);
    assert_eq!(c.background.as_ref().unwrap().b, 1e-6);
    assert_eq!(material(&c, "ferrite").mu_r, 2000.0);
}

#[test]
fn expressions_use_parameters_that_use_parameters() {
    let text = PLANAR.replacen(
        "R = 5\n",
        "R = \"sqrt(A/pi)\"\nA = \"pi*B^2\"\nB = \"max(2, min(5, 9)) - 1\"\n",
        1,
    );
    let c = ok(&text);
    // B = 4, A = 16π, R = 4 mm.
    assert!((c.parameters["R"] - 4.0).abs() < 1e-12);
    let Shape::Circle { radius, .. } = c.conductors[0].shape else {
        panic!()
    };
    assert!((radius - 0.004).abs() < 1e-15);
    // Unary minus on a parameter, and a negative sense written as an expression.
    let c = ok(&PLANAR.replacen("sense = -1", "sense = \"-R/R\"", 1));
    let CoilWindow::Sides(s) = &c.coils[0].window else {
        panic!()
    };
    assert_eq!(s[1].1, -1.0);
}

#[test]
fn length_units_convert_to_metres() {
    for (unit, metres) in [("mm", 1e-3), ("cm", 1e-2), ("m", 1.0), ("in", 0.0254)] {
        let text = PLANAR.replacen(
            "frequency = 50\n",
            &format!("frequency = 50\nlength_unit = \"{unit}\"\n"),
            1,
        );
        let c = ok(&text);
        assert_eq!(c.length_unit_m, metres);
        let Shape::Circle { center, radius } = c.conductors[0].shape else {
            panic!()
        };
        assert!((radius - 5.0 * metres).abs() < 1e-12 * metres, "{unit}");
        assert!((center[1] + 50.0 * metres).abs() < 1e-12 * metres, "{unit}");
        assert!(
            (c.domain.mesh_size - 10.0 * metres).abs() < 1e-12 * metres,
            "{unit}"
        );
        assert_eq!(c.depth, 1.0, "default depth is 1 m whatever the unit");
    }
    let c = ok(&PLANAR.replacen("frequency = 50\n", "frequency = 50\ndepth = 200\n", 1));
    assert!((c.depth - 0.2).abs() < 1e-15);
    let c = ok(&PLANAR.replacen("wire = \"awg30\"", "wire_diameter = 0.3", 1));
    assert_eq!(
        c.coils[0].wire,
        Wire {
            awg: None,
            diameter: 0.3e-3
        }
    );
}

#[test]
fn rect_center_size_form() {
    let c = ok(&PLANAR.replacen(
        "rect = { min = [-20, -3], max = [20, 3] }",
        "rect = { center = [1, 2], size = [40, 6] }",
        1,
    ));
    assert_eq!(
        c.parts[0].shape,
        Shape::Rect {
            min: [-0.019, -0.001],
            max: [0.021, 0.005]
        }
    );
}

#[test]
fn planar_coil_sides_keep_their_senses() {
    let c = ok(PLANAR);
    let CoilWindow::Sides(sides) = &c.coils[0].window else {
        panic!("sides expected")
    };
    assert_eq!(sides.len(), 2);
    assert_eq!(
        sides[0],
        (
            Shape::Rect {
                min: [-0.015, 0.0035],
                max: [0.015, 0.006]
            },
            1.0
        )
    );
    assert_eq!(
        sides[1],
        (
            Shape::Rect {
                min: [-0.015, -0.006],
                max: [0.015, -0.0035]
            },
            -1.0
        )
    );
    assert_eq!(c.coils[0].fill_factor, 0.6, "documented default");
    assert_eq!(c.coils[0].temperature_c, 20.0, "documented default");
}

#[test]
fn other_shapes_convert() {
    let c = ok(&PLANAR.replacen(
        "rect = { min = [-20, -3], max = [20, 3] }",
        "polygon = [[-20, -3], [20, -3], [0, 3]]",
        1,
    ));
    assert_eq!(
        c.parts[0].shape,
        Shape::Polygon(vec![[-0.02, -0.003], [0.02, -0.003], [0.0, 0.003]])
    );
    let c = ok(&PLANAR.replacen(
        "rect = { min = [-20, -3], max = [20, 3] }",
        "ellipse = { center = [0, 0], semi_axes = [20, 3] }",
        1,
    ));
    assert_eq!(
        c.parts[0].shape,
        Shape::Ellipse {
            center: [0.0, 0.0],
            semi_axes: [0.02, 0.003]
        }
    );
    let c = ok(&PLANAR.replacen(
        "rect = { min = [-20, -3], max = [20, 3] }",
        "annulus = { center = [0, 60], inner = 10, outer = 20 }",
        1,
    ));
    assert_eq!(
        c.parts[0].shape,
        Shape::Annulus {
            center: [0.0, 0.06],
            inner: 0.01,
            outer: 0.02
        }
    );
}

#[test]
fn builtin_materials_and_override() {
    let c = ok(PLANAR);
    assert_eq!(material(&c, "air").mu_r, 1.0);
    assert_eq!(material(&c, "air").conductivity, 0.0);
    // Typical values, no source (see model.rs).
    assert_eq!(material(&c, "copper").conductivity, 5.8e7);
    assert_eq!(material(&c, "aluminium").conductivity, 3.5e7);
    assert_eq!(
        c.material(c.conductors[0].material).name,
        "copper",
        "conductor default material"
    );
    assert_eq!(
        c.conductors[0].kind,
        ConductorKind::Solid,
        "conductor default kind"
    );
    let c = ok(&PLANAR.replacen(
        "[materials.ferrite]",
        "[materials.copper]\nconductivity = 5.0e7\n\n[materials.ferrite]",
        1,
    ));
    assert_eq!(material(&c, "copper").conductivity, 5.0e7);
}

#[test]
fn sweep_from_to_steps_includes_both_ends() {
    let c = ok(&PLANAR.replacen("values = [3, 5, 8]", "from = 2\nto = 8\nsteps = 4", 1));
    assert_eq!(c.sweeps[0].values, vec![2.0, 4.0, 6.0, 8.0]);
}

#[test]
fn overrides_replace_parameters_and_dependents() {
    let text = PLANAR.replacen("R = 5\n", "R = \"H/2\"\nH = 10\n", 1);
    let raw = parse_str("good.toml", &text).unwrap();
    let src = SourceInfo::new("good.toml", text.clone());
    let c = resolve(&raw, &src, &BTreeMap::from([("H".to_string(), 14.0)])).unwrap();
    let Shape::Circle { radius, .. } = c.conductors[0].shape else {
        panic!()
    };
    assert!((radius - 0.007).abs() < 1e-15);
    let e = resolve(&raw, &src, &BTreeMap::from([("HH".to_string(), 1.0)])).unwrap_err();
    assert_eq!(e.kind, CaseErrorKind::UnknownOverride);
    assert!(e.to_string().contains("HH"), "{e}");
    assert!(
        e.help_text().unwrap().contains("`H`"),
        "{:?}",
        e.help_text()
    );
}

#[test]
fn circuit_load_and_coil_choice() {
    let text = format!("{PLANAR}\n[circuit]\ntuning = \"parallel\"\nload = \"2*500\"\n");
    let c = ok(&text);
    let circ = c.circuit.as_ref().unwrap();
    assert_eq!(
        (c.coil(circ.coil).name.as_str(), circ.tuning, circ.load),
        ("pickup", Tuning::Parallel, Load::Resistance(1000.0))
    );
    let (e, t) = broken(&text, "load = \"2*500\"", "load = 0");
    expect(
        &e,
        &t,
        CaseErrorKind::NotPositive,
        "circuit.load",
        "load = 0",
    );
}

#[test]
fn axis_crossing_shapes_are_allowed() {
    // A sphere (circle centred on the axis) is legal in an axisymmetric model.
    let c = ok(&AXI.replacen(
        "rect = { min = [0, \"-L/2\"], max = [4, \"L/2\"] }",
        "circle = { center = [0, 0], radius = 4 }",
        1,
    ));
    assert!(matches!(c.parts[0].shape, Shape::Circle { .. }));
    assert!(c.background.is_some());
}

// ---------------------------------------------------------------------------------------
// one test per error class

#[test]
fn unknown_key_suggests_nearest() {
    let (e, t) = broken(PLANAR, "radius = \"R\"", "radus = \"R\"");
    expect(
        &e,
        &t,
        CaseErrorKind::UnknownKey,
        "conductor[0].circle.radus",
        "radus",
    );
    assert!(
        e.help_text().unwrap().contains("did you mean `radius`"),
        "{:?}",
        e.help_text()
    );
    let (e, t) = broken(PLANAR, "[model]", "[modle]");
    expect(&e, &t, CaseErrorKind::UnknownKey, "modle", "[modle]");
    assert!(e.help_text().unwrap().contains("`model`"));
    let (e, t) = broken(PLANAR, "current = 100", "current = 100\nmeshsize = 2");
    expect(
        &e,
        &t,
        CaseErrorKind::UnknownKey,
        "conductor[0].meshsize",
        "meshsize",
    );
    assert!(e.help_text().unwrap().contains("`mesh_size`"));
}

#[test]
fn unknown_choice_suggests_nearest() {
    let (e, t) = broken(PLANAR, "symmetry = \"planar\"", "symmetry = \"planer\"");
    expect(
        &e,
        &t,
        CaseErrorKind::UnknownKey,
        "model.symmetry",
        "planer",
    );
    assert!(e.help_text().unwrap().contains("\"planar\""));
}

#[test]
fn missing_required_key() {
    let (e, t) = broken(PLANAR, "current = 100\n", "");
    expect(
        &e,
        &t,
        CaseErrorKind::MissingKey,
        "conductor[0].current",
        "[[conductor]]",
    );
    let (e, t) = broken(PLANAR, "mesh_size = 10\n", "");
    expect(
        &e,
        &t,
        CaseErrorKind::MissingKey,
        "domain.mesh_size",
        "[domain]",
    );
}

#[test]
fn wrong_type() {
    let (e, t) = broken(PLANAR, "turns = 100", "turns = true");
    expect(
        &e,
        &t,
        CaseErrorKind::WrongType,
        "coil[0].turns",
        "turns = true",
    );
    let (e, t) = broken(PLANAR, "center = [0, -50]", "center = [0, -50, 1]");
    expect(
        &e,
        &t,
        CaseErrorKind::WrongType,
        "conductor[0].circle.center",
        "center = [0, -50, 1]",
    );
}

#[test]
fn two_shape_keys() {
    let (e, t) = broken(
        PLANAR,
        "max = [20, 3] }",
        "max = [20, 3] }\ncircle = { center = [0, 0], radius = 2 }",
    );
    expect(
        &e,
        &t,
        CaseErrorKind::ShapeKeys,
        "part[0].circle",
        "circle = { center = [0, 0]",
    );
    let (e, t) = broken(PLANAR, "rect = { min = [-20, -3], max = [20, 3] }\n", "");
    expect(&e, &t, CaseErrorKind::ShapeKeys, "part[0]", "[[part]]");
    let (e, t) = broken(
        PLANAR,
        "rect = { min = [-20, -3], max = [20, 3] }",
        "rect = { min = [-20, -3], size = [20, 3] }",
    );
    expect(
        &e,
        &t,
        CaseErrorKind::ShapeKeys,
        "part[0].rect",
        "size = [20, 3]",
    );
}

#[test]
fn unknown_material_suggests_nearest() {
    let (e, t) = broken(PLANAR, "material = \"ferrite\"", "material = \"ferite\"");
    expect(
        &e,
        &t,
        CaseErrorKind::UnknownMaterial,
        "part[0].material",
        "\"ferite\"",
    );
    assert!(e.help_text().unwrap().contains("\"ferrite\""));
}

#[test]
fn duplicate_names() {
    let (e, t) = broken(PLANAR, "name = \"pickup\"", "name = \"core\"");
    expect(
        &e,
        &t,
        CaseErrorKind::DuplicateName,
        "coil[0].name",
        "name = \"core\"\nturns",
    );
    assert!(e.message.contains("part[0]"), "{}", e.message);
}

#[test]
fn non_positive_sizes() {
    let (e, t) = broken(PLANAR, "radius = \"R\"", "radius = \"-R\"");
    expect(
        &e,
        &t,
        CaseErrorKind::NotPositive,
        "conductor[0].circle.radius",
        "\"-R\"",
    );
    let (e, t) = broken(PLANAR, "mesh_size = 10", "mesh_size = 0");
    expect(
        &e,
        &t,
        CaseErrorKind::NotPositive,
        "domain.mesh_size",
        "mesh_size = 0",
    );
    let (e, t) = broken(PLANAR, "turns = 100", "turns = 0");
    expect(
        &e,
        &t,
        CaseErrorKind::NotPositive,
        "coil[0].turns",
        "turns = 0",
    );
    let (e, t) = broken(PLANAR, "wire = \"awg30\"", "wire_diameter = -0.2");
    expect(
        &e,
        &t,
        CaseErrorKind::NotPositive,
        "coil[0].wire_diameter",
        "wire_diameter",
    );
    let (e, t) = broken(PLANAR, "max = [20, 3] }", "max = [20, 3] }\nmesh_size = -1");
    expect(
        &e,
        &t,
        CaseErrorKind::NotPositive,
        "part[0].mesh_size",
        "mesh_size = -1",
    );
    let (e, t) = broken(PLANAR, "max = [20, 3] }", "max = [-30, 3] }");
    expect(
        &e,
        &t,
        CaseErrorKind::NotPositive,
        "part[0].rect.max",
        "max = [-30, 3]",
    );
    let (e, t) = broken(
        PLANAR,
        "rect = { min = [-20, -3], max = [20, 3] }",
        "annulus = { center = [0, 60], inner = 20, outer = 10 }",
    );
    expect(
        &e,
        &t,
        CaseErrorKind::NotPositive,
        "part[0].annulus.outer",
        "annulus",
    );
}

#[test]
fn fill_factor_out_of_range() {
    for bad in ["1.5", "0"] {
        let (e, t) = broken(
            PLANAR,
            "wire = \"awg30\"",
            &format!("wire = \"awg30\"\nfill_factor = {bad}"),
        );
        expect(
            &e,
            &t,
            CaseErrorKind::OutOfRange,
            "coil[0].fill_factor",
            "fill_factor",
        );
    }
}

#[test]
fn axisymmetric_shape_wholly_at_negative_r() {
    let (e, t) = broken(
        AXI,
        "rect = { min = [0, \"-L/2\"], max = [4, \"L/2\"] }",
        "rect = { min = [-9, \"-L/2\"], max = [-4, \"L/2\"] }",
    );
    expect(&e, &t, CaseErrorKind::Axisymmetry, "part[0]", "min = [-9");
}

#[test]
fn shape_outside_domain() {
    let (e, t) = broken(PLANAR, "center = [0, -50]", "center = [0, -98]");
    expect(
        &e,
        &t,
        CaseErrorKind::OutsideDomain,
        "conductor[0]",
        "circle = { center = [0, -98]",
    );
}

#[test]
fn non_axial_background_in_axisymmetric() {
    let (e, t) = broken(AXI, "direction = [0, 1]", "direction = [1, 0]");
    expect(
        &e,
        &t,
        CaseErrorKind::Axisymmetry,
        "background.direction",
        "direction = [1, 0]",
    );
}

#[test]
fn undefined_parameter_points_into_the_string() {
    let (e, t) = broken(PLANAR, "radius = \"R\"", "radius = \"2*Rr\"");
    expect(
        &e,
        &t,
        CaseErrorKind::UndefinedName,
        "conductor[0].circle.radius",
        "2*Rr",
    );
    // The label sits on `Rr` inside the string, not on the whole value.
    let (_, col) = e.line_col().unwrap();
    let line = t.lines().nth(line_of(&t, "2*Rr") - 1).unwrap();
    assert_eq!(col, line.find("Rr").unwrap() + 1);
    assert!(e.help_text().unwrap().contains("`R`"));
}

#[test]
fn division_by_zero_names_the_key() {
    let (e, t) = broken(PLANAR, "radius = \"R\"", "radius = \"R/(R-5)\"");
    expect(
        &e,
        &t,
        CaseErrorKind::NotFinite,
        "conductor[0].circle.radius",
        "R/(R-5)",
    );
    assert!(e.message.contains("division by zero"));
}

#[test]
fn parameter_cycle() {
    let (e, t) = broken(PLANAR, "R = 5\n", "R = \"W - Q\"\nQ = \"R + 1\"\n");
    assert_eq!(e.kind, CaseErrorKind::BadExpression, "{}", e.render_plain());
    assert!(e.message.contains("cycle"), "{}", e.message);
    assert!(
        e.key == "parameters.Q" || e.key == "parameters.R",
        "{}",
        e.key
    );
    assert!(
        e.line_col().unwrap().0 == line_of(&t, "Q = ")
            || e.line_col().unwrap().0 == line_of(&t, "R = ")
    );
}

#[test]
fn winding_does_not_fit() {
    // 100000 turns of AWG 30 (0.25464 mm, ASTM B258) need 5093 mm² of copper; a side holds
    // 0.6 × 30 × 2.5 = 45 mm².
    let (e, t) = broken(PLANAR, "turns = 100", "turns = 100000");
    expect(
        &e,
        &t,
        CaseErrorKind::WindingDoesNotFit,
        "coil[0].turns",
        "turns = 100000",
    );
    assert!(e.message.contains("45 mm²"), "{}", e.message);
    // 800 turns need 40.7 mm² and fit; 900 need 45.8 mm² and do not.
    ok(&PLANAR.replacen("turns = 100", "turns = 800", 1));
    broken(PLANAR, "turns = 100", "turns = 900");
}

#[test]
fn unknown_wire_gauge() {
    for bad in ["awg3x", "awg50", "awg8", "30"] {
        let (e, t) = broken(PLANAR, "wire = \"awg30\"", &format!("wire = \"{bad}\""));
        expect(
            &e,
            &t,
            CaseErrorKind::UnknownGauge,
            "coil[0].wire",
            "wire = ",
        );
        assert!(e.message.contains(bad));
    }
}

#[test]
fn bad_edge_conditions() {
    let edge = "[[edge]]\nside = \"left\"\ncondition = \"flux-normal\"\n\n[materials.ferrite]";
    // Rect planar: allowed.
    let c = ok(&PLANAR.replacen("[materials.ferrite]", edge, 1));
    assert_eq!(
        c.domain.edges,
        vec![(DomainSide::Left, EdgeKind::FluxNormal)]
    );
    // The axis side of an axisymmetric domain.
    let (e, t) = broken(AXI, "[materials.ferrite]", edge);
    expect(
        &e,
        &t,
        CaseErrorKind::BadEdge,
        "edge[0].side",
        "side = \"left\"",
    );
    // A circle domain.
    let circ = PLANAR.replacen(
        "rect = { min = [-100, -100], max = [100, 100] }",
        "circle = { center = [0, 0], radius = 100 }",
        1,
    );
    let (e, t) = broken(&circ, "[materials.ferrite]", edge);
    expect(
        &e,
        &t,
        CaseErrorKind::BadEdge,
        "edge[0].side",
        "side = \"left\"",
    );
    // The same side twice.
    let twice = format!("[[edge]]\nside = \"top\"\ncondition = \"flux-normal\"\n{edge}")
        .replace("\"left\"", "\"top\"");
    let (e, t) = broken(PLANAR, "[materials.ferrite]", &twice);
    assert_eq!(e.kind, CaseErrorKind::BadEdge);
    assert_eq!(
        e.line_col().unwrap().0,
        t.lines()
            .enumerate()
            .filter(|(_, l)| l.contains("side = \"top\""))
            .nth(1)
            .unwrap()
            .0
            + 1
    );
}

#[test]
fn probe_needs_two_points() {
    let (e, t) = broken(PLANAR, "points = 11", "points = 1");
    expect(
        &e,
        &t,
        CaseErrorKind::OutOfRange,
        "probe[0].line.points",
        "points = 1",
    );
    let (e, t) = broken(PLANAR, "points = 11", "points = 2.5");
    expect(
        &e,
        &t,
        CaseErrorKind::OutOfRange,
        "probe[0].line.points",
        "points = 2.5",
    );
}

#[test]
fn bad_sweeps() {
    let (e, t) = broken(PLANAR, "values = [3, 5, 8]", "values = []");
    expect(
        &e,
        &t,
        CaseErrorKind::BadSweep,
        "sweep[0].values",
        "values = []",
    );
    let (e, t) = broken(PLANAR, "parameter = \"R\"", "parameter = \"RR\"");
    expect(
        &e,
        &t,
        CaseErrorKind::BadSweep,
        "sweep[0].parameter",
        "\"RR\"",
    );
    assert!(e.help_text().unwrap().contains("`R`"));
    // A sweep point that breaks the geometry (R = 60 puts the bar outside the domain) is
    // not an error of `resolve`, but `check_sweep_points` reports it.
    let text = PLANAR.replacen("values = [3, 5, 8]", "values = [3, 60]", 1);
    let case = ok(&text);
    let raw = parse_str("bad.toml", &text).unwrap();
    let errs = check_sweep_points(&raw, &SourceInfo::new("bad.toml", text.clone()), &case);
    assert_eq!(errs.len(), 1);
    expect(
        &errs[0],
        &text,
        CaseErrorKind::OutsideDomain,
        "conductor[0]",
        "circle = { center = [0, -50]",
    );
    assert!(
        errs[0].message.contains("sweep point R = 60"),
        "{}",
        errs[0].message
    );
}

#[test]
fn element_order_and_frequency() {
    let (e, t) = broken(
        PLANAR,
        "frequency = 50",
        "frequency = 50\nelement_order = 3",
    );
    expect(
        &e,
        &t,
        CaseErrorKind::OutOfRange,
        "model.element_order",
        "element_order = 3",
    );
    let (e, t) = broken(PLANAR, "frequency = 50", "frequency = -50");
    expect(
        &e,
        &t,
        CaseErrorKind::OutOfRange,
        "model.frequency",
        "frequency = -50",
    );
}

#[test]
fn bad_polygons() {
    let (e, t) = broken(
        PLANAR,
        "rect = { min = [-20, -3], max = [20, 3] }",
        "polygon = [[0, 0], [10, 0]]",
    );
    expect(
        &e,
        &t,
        CaseErrorKind::BadPolygon,
        "part[0].polygon",
        "polygon",
    );
    let (e, t) = broken(
        PLANAR,
        "rect = { min = [-20, -3], max = [20, 3] }",
        "polygon = [[0, 0], [10, 0], [20, 0]]",
    );
    expect(
        &e,
        &t,
        CaseErrorKind::BadPolygon,
        "part[0].polygon",
        "polygon",
    );
    assert!(e.message.contains("zero area"));
    let (e, t) = broken(
        PLANAR,
        "rect = { min = [-20, -3], max = [20, 3] }",
        "polygon = [[0, 0], [10, 10], [10, 0], [0, 10]]",
    );
    expect(
        &e,
        &t,
        CaseErrorKind::BadPolygon,
        "part[0].polygon",
        "polygon",
    );
}

#[test]
fn planar_coil_needs_sides_of_both_senses() {
    let (e, t) = broken(PLANAR, "sense = -1", "sense = 1");
    expect(
        &e,
        &t,
        CaseErrorKind::OutOfRange,
        "coil[0].sides",
        "sides = [",
    );
    let (e, t) = broken(PLANAR, "sense = -1", "sense = 2");
    expect(
        &e,
        &t,
        CaseErrorKind::OutOfRange,
        "coil[0].sides[1].sense",
        "sense = 2",
    );
}

#[test]
fn syntax_and_io_errors() {
    let (e, _) = broken(PLANAR, "title = \"base\"", "title = \"base");
    assert_eq!(e.kind, CaseErrorKind::Syntax);
    assert_eq!(e.line_col().unwrap().0, 2);
    let e = load_case(Path::new("/nonexistent/dir/no-such-case.toml")).unwrap_err();
    assert_eq!(e.kind, CaseErrorKind::Io);
    assert!(e.to_string().contains("no-such-case.toml"), "{e}");
}

/// Every file in tests/bad-cases/ starts with `# expect: KIND KEY` and has one line marked
/// `# <- here`, where the error must point; or with `# expect-solve: ...` (refused only when
/// meshed, see tests/bad_cases.rs), and then it must load.
#[test]
fn bad_case_files_fail_where_they_say() {
    let dir = repo("tests/bad-cases");
    let mut n = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_none_or(|x| x != "toml") {
            continue;
        }
        let text = std::fs::read_to_string(&path).unwrap();
        let first = text.lines().next().unwrap();
        if first.starts_with("# expect-solve: ") {
            if let Err(e) = load_case(&path) {
                panic!("{}", e.render_plain());
            }
            continue;
        }
        let mut words = first
            .strip_prefix("# expect: ")
            .expect("expect header")
            .split_whitespace();
        let (kind, key) = (words.next().unwrap(), words.next().unwrap_or(""));
        let line = text
            .lines()
            .position(|l| l.contains("# <- here"))
            .expect("marker")
            + 1;
        let e = load_case(&path).expect_err(&path.display().to_string());
        let rendered = e.render_plain();
        assert_eq!(format!("{:?}", e.kind), kind, "{rendered}");
        assert_eq!(e.key, key, "{rendered}");
        assert_eq!(e.line_col().unwrap().0, line, "{rendered}");
        assert!(
            rendered.contains(&format!("{}:{line}:", path.display())),
            "{rendered}"
        );
        n += 1;
    }
    assert!(n >= 3, "only {n} bad cases");
}
