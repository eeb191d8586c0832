//! The shape keys of parts, conductors, coil windows and the domain (`rect`, `circle`,
//! `ellipse`, `annulus`, `polygon`), and the checks of a region's placement: inside the
//! domain, at r >= 0, large enough to mesh, not overlapping another current carrier.

use std::ops::Range;

use fluxpick_mesh::{points_collinear, polygon_area, polygon_self_intersection, BBox};
use toml::Spanned;

use super::{fmt_g, sp, Ctx, Result};
use crate::case::error::CaseErrorKind as K;
use crate::case::model::{Domain, Shape};
use crate::case::raw::{Pt, RawRect, ShapeKeys};

/// Smallest width of a region as a fraction of the domain's diagonal. The mesher merges
/// points closer than 1e-9 of it; a circle of radius 1e-7 mm in a 200 mm square domain
/// vanished in a trial (radius 1e-6 mm still meshed), so this leaves a factor of ten to spare.
pub const MIN_FEATURE_FRACTION: f64 = 1e-7;

/// A conductor or a coil side resolved so far, for the overlap check.
pub(super) struct Carrier {
    pub(super) shape: Shape,
    pub(super) span: Range<usize>,
    pub(super) key: String,
    pub(super) name: String,
}

impl Ctx<'_> {
    /// The one shape of an entity. `entity_span` is underlined when no shape key is given.
    pub(super) fn shape(
        &self,
        keys: ShapeKeys<'_>,
        path: &str,
        entity_span: Range<usize>,
        what: &str,
    ) -> Result<(Shape, Range<usize>)> {
        let mut present: Vec<(&str, Range<usize>)> = Vec::new();
        if let Some(s) = keys.rect {
            present.push(("rect", s.span()));
        }
        if let Some(s) = keys.circle {
            present.push(("circle", s.span()));
        }
        if let Some(s) = keys.ellipse {
            present.push(("ellipse", s.span()));
        }
        if let Some(s) = keys.annulus {
            present.push(("annulus", s.span()));
        }
        if let Some(s) = keys.polygon {
            present.push(("polygon", s.span()));
        }
        present.sort_by_key(|p| p.1.start);
        if present.is_empty() {
            return Err(self.err(
                K::ShapeKeys,
                Some(entity_span),
                path,
                format!("{what} has no shape"),
                "give exactly one of rect, circle, ellipse, annulus, polygon",
            ));
        }
        if present.len() > 1 {
            return Err(self.err(
                K::ShapeKeys,
                Some(present[1].1.clone()),
                &format!("{path}.{}", present[1].0),
                format!(
                    "{what} has two shape keys, `{}` and `{}`",
                    present[0].0, present[1].0
                ),
                "give exactly one shape key per entity: remove one of them",
            ));
        }
        let span = present[0].1.clone();
        let shape = if let Some(r) = keys.rect {
            self.rect(r, &format!("{path}.rect"))?
        } else if let Some(c) = keys.circle {
            let c = c.get_ref();
            let k = format!("{path}.circle");
            Shape::Circle {
                center: self.point(&c.center, &format!("{k}.center"))?,
                radius: self.pos_len(&c.radius, &format!("{k}.radius"), "the radius")?,
            }
        } else if let Some(e) = keys.ellipse {
            let e = e.get_ref();
            let k = format!("{path}.ellipse");
            Shape::Ellipse {
                center: self.point(&e.center, &format!("{k}.center"))?,
                semi_axes: self.pos_pair(&e.semi_axes, &format!("{k}.semi_axes"), "a semi-axis")?,
            }
        } else if let Some(a) = keys.annulus {
            let a = a.get_ref();
            let k = format!("{path}.annulus");
            let inner = self.pos_len(&a.inner, &format!("{k}.inner"), "the inner radius")?;
            let outer = self.pos_len(&a.outer, &format!("{k}.outer"), "the outer radius")?;
            if outer <= inner {
                return Err(self.err(
                    K::NotPositive,
                    sp(&a.outer),
                    &format!("{k}.outer"),
                    "the outer radius must exceed the inner radius",
                    "swap them, or make the annulus wider (a full disk is a `circle`)",
                ));
            }
            Shape::Annulus {
                center: self.point(&a.center, &format!("{k}.center"))?,
                inner,
                outer,
            }
        } else if let Some(p) = keys.polygon {
            self.polygon(p, &format!("{path}.polygon"))?
        } else {
            unreachable!("one shape key is present")
        };
        Ok((shape, span))
    }

    pub(super) fn rect(&self, r: &Spanned<RawRect>, key: &str) -> Result<Shape> {
        let v = r.get_ref();
        match (&v.min, &v.max, &v.center, &v.size) {
            (Some(min), Some(max), None, None) => {
                let lo = self.point(min, &format!("{key}.min"))?;
                let hi = self.point(max, &format!("{key}.max"))?;
                for k in 0..2 {
                    if hi[k] <= lo[k] {
                        return Err(self.err(
                            K::NotPositive,
                            sp(max),
                            &format!("{key}.max"),
                            format!(
                                "the rectangle has zero or negative {}: max must exceed min in \
                                 both coordinates",
                                if k == 0 { "width" } else { "height" }
                            ),
                            "make each `max` coordinate larger than the matching `min` one",
                        ));
                    }
                }
                Ok(Shape::Rect { min: lo, max: hi })
            }
            (None, None, Some(c), Some(s)) => {
                let c = self.point(c, &format!("{key}.center"))?;
                let s = self.pos_pair(s, &format!("{key}.size"), "the rectangle's size")?;
                Ok(Shape::Rect {
                    min: [c[0] - s[0] / 2.0, c[1] - s[1] / 2.0],
                    max: [c[0] + s[0] / 2.0, c[1] + s[1] / 2.0],
                })
            }
            _ => Err(self.err(
                K::ShapeKeys,
                sp(r),
                key,
                "a rect needs either `min` and `max`, or `center` and `size`",
                "write rect = { min = [x0, y0], max = [x1, y1] } or \
                 rect = { center = [x, y], size = [w, h] }",
            )),
        }
    }

    pub(super) fn polygon(&self, p: &Spanned<Vec<Pt>>, key: &str) -> Result<Shape> {
        let mut pts = Vec::with_capacity(p.get_ref().len());
        for (i, q) in p.get_ref().iter().enumerate() {
            pts.push(self.point(q, &format!("{key}[{i}]"))?);
        }
        // Accept a closed ring (first point repeated at the end).
        if pts.len() > 3 && pts.first() == pts.last() {
            pts.pop();
        }
        if pts.len() < 3 {
            return Err(self.err(
                K::BadPolygon,
                sp(p),
                key,
                format!("a polygon needs at least 3 points (got {})", pts.len()),
                "list the corners as [[x, y], ...]",
            ));
        }
        let BBox { min: lo, max: hi } = Shape::Polygon(pts.clone()).bbox();
        let scale = (hi[0] - lo[0]).powi(2) + (hi[1] - lo[1]).powi(2);
        let zero_area = || {
            self.err(
                K::BadPolygon,
                sp(p),
                key,
                "the polygon has zero area",
                "its points must not all lie on one line",
            )
        };
        if scale == 0.0 || points_collinear(&pts) {
            return Err(zero_area());
        }
        // Before the area: the lobes of a figure of eight cancel in the signed area.
        if polygon_self_intersection(&pts).is_some() {
            return Err(self.err(
                K::BadPolygon,
                sp(p),
                key,
                "the polygon's edges cross each other",
                "list the corners in order around the outline so that no edges cross",
            ));
        }
        if polygon_area(&pts).abs() <= 1e-12 * scale {
            return Err(zero_area());
        }
        Ok(Shape::Polygon(pts))
    }

    /// Axis and domain checks for a region shape.
    pub(super) fn check_placement(
        &self,
        shape: &Shape,
        span: &Range<usize>,
        key: &str,
        domain: &Domain,
    ) -> Result<()> {
        let BBox { min: lo, max: hi } = shape.bbox();
        if self.axisym && shape.area(true) <= 0.0 {
            return Err(self.err(
                K::Axisymmetry,
                Some(span.clone()),
                key,
                format!(
                    "the shape lies wholly at r < 0 (its largest r is {})",
                    self.show(hi[0])
                ),
                "axisymmetric coordinates are [r, z] with r >= 0: move it to positive r",
            ));
        }
        let lo = if self.axisym {
            [lo[0].max(0.0), lo[1]]
        } else {
            lo
        };
        let outside = match &domain.shape {
            Shape::Rect { min, max } => {
                let tol = 1e-9 * ((max[0] - min[0]) + (max[1] - min[1]));
                lo[0] < min[0] - tol
                    || lo[1] < min[1] - tol
                    || hi[0] > max[0] + tol
                    || hi[1] > max[1] + tol
            }
            Shape::Circle { center, radius } => {
                shape.max_distance_from(*center) > radius * (1.0 + 1e-9)
            }
            _ => false,
        };
        if outside {
            return Err(self.err(
                K::OutsideDomain,
                Some(span.clone()),
                key,
                format!(
                    "the shape is not inside the domain (its bounding box runs from [{}, {}] \
                     to [{}, {}])",
                    self.show(lo[0]),
                    self.show(lo[1]),
                    self.show(hi[0]),
                    self.show(hi[1])
                ),
                "enlarge [domain] or move the shape into it",
            ));
        }
        let BBox { min: dlo, max: dhi } = domain.shape.bbox();
        let size = (dhi[0] - dlo[0]).hypot(dhi[1] - dlo[1]);
        let width = shape.smallest_extent();
        if width < MIN_FEATURE_FRACTION * size {
            return Err(self.err(
                K::OutOfRange,
                Some(span.clone()),
                key,
                format!(
                    "the shape is too small to mesh in this domain: it is {} wide at its \
                     narrowest, less than {} of the domain's diagonal ({})",
                    self.show(width),
                    fmt_g(MIN_FEATURE_FRACTION),
                    self.show(size)
                ),
                "make the shape larger or the domain smaller",
            ));
        }
        Ok(())
    }

    /// Refuses a conductor or coil side that shares area with an earlier one: both impose a
    /// current, so the one drawn over would silently lose part of its cross-section.
    pub(super) fn check_overlap(
        &self,
        shape: &Shape,
        span: &Range<usize>,
        key: &str,
        earlier: &[Carrier],
    ) -> Result<()> {
        for c in earlier {
            if shape.overlaps(&c.shape, self.axisym) {
                let (line, _) = crate::case::error::line_col_of(&self.src.text, c.span.start);
                return Err(self.err(
                    K::Overlap,
                    Some(span.clone()),
                    key,
                    format!(
                        "the shape overlaps `{}` (\"{}\", line {line}): conductors and coil \
                         sides carry current and cannot share area",
                        c.key, c.name
                    ),
                    "move or shrink one of them: they may touch or share an edge, but only \
                     parts may lie under later entries",
                ));
            }
        }
        Ok(())
    }
}
