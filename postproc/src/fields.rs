//! The solved fields of one case as the figures use them: each winding's unit solution and
//! the applied field's as rms phasors, their combination at the case's currents, and what the
//! solver said of itself.
//!
//! Phasors are rms with e^{jωt}; a static solve has zero imaginary parts. The windings are
//! numbered as the solver's `Problem::windings` (coils first, then conductors).

use std::f64::consts::TAU;
use std::sync::Arc;

use fluxpick_solver::nonlinear::NewtonReport;
use fluxpick_solver::statics::Density;
use fluxpick_solver::{Discretisation, Field, HarmonicSolution, SolveError, StaticSolution};
use num_complex::Complex64 as C;

use crate::figures::flux_linkage;

/// A phasor field: real and imaginary parts and the solid-conductor constraint values ψ of
/// a harmonic solve (empty when static).
#[derive(Clone)]
pub struct Phasor {
    pub f: [Field; 2],
    pub psi: Vec<C>,
}

/// A field of the same discretisation with every value zero.
pub fn zero_like(f: &Field) -> Field {
    Field::combine(&[(0.0, f)]).expect("one part")
}

impl Phasor {
    /// A static field as a phasor of phase 0.
    pub fn real(f: &Field) -> Phasor {
        Phasor {
            f: [f.clone(), zero_like(f)],
            psi: vec![],
        }
    }

    /// Σ c_i P_i with complex coefficients; `like` gives the discretisation when `parts` is
    /// empty, `nk` the number of constraint values.
    pub fn combine(parts: &[(C, &Phasor)], like: &Field, nk: usize) -> Phasor {
        let mut re: Vec<(f64, &Field)> = Vec::new();
        let mut im: Vec<(f64, &Field)> = Vec::new();
        let mut psi = vec![C::new(0.0, 0.0); nk];
        for (k, p) in parts {
            re.push((k.re, &p.f[0]));
            re.push((-k.im, &p.f[1]));
            im.push((k.im, &p.f[0]));
            im.push((k.re, &p.f[1]));
            for (a, b) in psi.iter_mut().zip(&p.psi) {
                *a += *k * *b;
            }
        }
        Phasor {
            f: [
                Field::combine(&re).unwrap_or_else(|| zero_like(like)),
                Field::combine(&im).unwrap_or_else(|| zero_like(like)),
            ],
            psi,
        }
    }
}

/// How the field was solved.
pub enum Solved {
    Static(StaticSolution),
    Harmonic(HarmonicSolution),
}

impl Solved {
    /// The unit solutions as phasors (each winding at 1 A rms, phase 0), the applied field's
    /// (at its b, phase 0), the windings' current densities per ampere and the number of
    /// constraint values.
    fn phasors(&self) -> (Vec<Phasor>, Option<Phasor>, Vec<Vec<Density>>, usize) {
        match self {
            Solved::Static(s) => (
                s.unit.iter().map(Phasor::real).collect(),
                s.background.as_ref().map(Phasor::real),
                s.densities.clone(),
                0,
            ),
            Solved::Harmonic(h) => (
                h.unit
                    .iter()
                    .zip(&h.unit_psi)
                    .map(|(f, p)| Phasor {
                        f: f.clone(),
                        psi: p.clone(),
                    })
                    .collect(),
                h.background.as_ref().map(|f| Phasor {
                    f: f.clone(),
                    psi: h.background_psi.clone(),
                }),
                h.densities.clone(),
                h.constraints.len(),
            ),
        }
    }

    pub fn disc(&self) -> &Arc<Discretisation> {
        match self {
            Solved::Static(s) => &s.disc,
            Solved::Harmonic(h) => &h.disc,
        }
    }
}

/// The fields of one solve, the hand-over from the solve to the figures.
pub struct Fields {
    pub solved: Solved,
    pub disc: Arc<Discretisation>,
    /// Per winding: its field at 1 A rms, phase 0.
    pub unit: Vec<Phasor>,
    /// The applied field's solution at its b, phase 0.
    pub background: Option<Phasor>,
    pub densities: Vec<Vec<Density>>,
    /// Constraint values per phasor (solid conductors and passive parts of a harmonic solve).
    pub n_constraints: usize,
    /// A field of this discretisation (the first unit solution, else the background's).
    pub like: Field,
    /// The windings' rms phasor currents.
    pub currents: Vec<C>,
    /// The coefficient of the applied field's solution in the total (None without one).
    pub background_coef: Option<C>,
    /// The field at the case's currents and applied field.
    pub total: Phasor,
    /// With B-H curves at 0 Hz: the Newton solve's report; `total` is then its field
    /// (superposition does not hold) and the unit solutions are those of the unsaturated
    /// materials.
    pub newton: Option<NewtonReport>,
    pub axisymmetric: bool,
}

impl Fields {
    /// The fields of a linear solve combined at `currents` and, when the solve has an
    /// applied field, `background_coef` (the applied field's phasor, None when absent).
    pub fn new(
        solved: Solved,
        currents: Vec<C>,
        background_coef: Option<C>,
    ) -> Result<Fields, SolveError> {
        let (unit, background, densities, nk) = solved.phasors();
        let like = match (unit.first(), &background) {
            (Some(u), _) => u.f[0].clone(),
            (None, Some(b)) => b.f[0].clone(),
            (None, None) => return Err(SolveError::NoUnknowns),
        };
        let background_coef = background_coef.filter(|_| background.is_some());
        let mut parts: Vec<(C, &Phasor)> = currents.iter().copied().zip(unit.iter()).collect();
        if let (Some(k), Some(bg)) = (background_coef, &background) {
            parts.push((k, bg));
        }
        let total = Phasor::combine(&parts, &like, nk);
        let disc = solved.disc().clone();
        let axisymmetric = disc.formulation == fluxpick_solver::Formulation::Axisymmetric;
        Ok(Fields {
            solved,
            disc,
            unit,
            background,
            densities,
            n_constraints: nk,
            like,
            currents,
            background_coef,
            total,
            newton: None,
            axisymmetric,
        })
    }

    /// Replaces the total by a Newton solve's field.
    pub fn with_newton(mut self, field: Field, report: NewtonReport) -> Fields {
        self.total = Phasor::real(&field);
        self.newton = Some(report);
        self
    }

    pub fn harmonic(&self) -> Option<&HarmonicSolution> {
        match &self.solved {
            Solved::Harmonic(h) => Some(h),
            Solved::Static(_) => None,
        }
    }

    /// Flux linkage of winding `i` in phasor field `p` (Wb-turns, per metre of depth in
    /// planar form).
    pub fn linkage(&self, i: usize, p: &Phasor) -> C {
        if self.densities[i].is_empty() {
            // a solid conductor of the harmonic solve: λ = ψ (planar) or 2πψ
            let h = self
                .harmonic()
                .expect("only solid conductors of a harmonic solve lack a density");
            let k = h
                .constraints
                .iter()
                .position(|k| k.winding == Some(i))
                .expect("constraint of a solid conductor");
            p.psi[k] * if self.axisymmetric { TAU } else { 1.0 }
        } else {
            C::new(
                flux_linkage(&p.f[0], &self.densities[i]),
                flux_linkage(&p.f[1], &self.densities[i]),
            )
        }
    }

    /// Eddy-current loss per region id of the total field (W for `depth`; zeros when static).
    pub fn region_losses(&self, depth: f64) -> Vec<f64> {
        match self.harmonic() {
            Some(h) => h
                .region_losses(&self.total.f, &self.total.psi)
                .iter()
                .map(|p| p * depth)
                .collect(),
            None => vec![0.0; self.disc.region_count],
        }
    }

    /// Current density per cell (A/m², rms phasor): induced and solid-conductor currents of
    /// the harmonic solve plus the imposed density of stranded windings.
    pub fn current_density(&self) -> Vec<C> {
        let disc = &self.disc;
        let mut out: Vec<C> = match self.harmonic() {
            Some(h) => h.cell_current_density(&self.total.f, &self.total.psi),
            None => vec![C::new(0.0, 0.0); disc.n_cells()],
        };
        for (w, dens) in self.densities.iter().enumerate() {
            for de in dens {
                for (cell, j) in out.iter_mut().enumerate() {
                    if disc.cell_region[cell] == de.region {
                        let v = disc.vertices(cell);
                        let x = [
                            (v[0][0] + v[1][0] + v[2][0]) / 3.0,
                            (v[0][1] + v[1][1] + v[2][1]) / 3.0,
                        ];
                        *j += self.currents[w] * de.at(x);
                    }
                }
            }
        }
        out
    }

    /// Cross-section area (m²) and volume (m³ for `depth`) of a set of regions.
    pub fn measure(&self, regions: &[u32], depth: f64) -> (f64, f64) {
        let disc = &self.disc;
        let axi = self.axisymmetric;
        let (mut area, mut volume) = (0.0, 0.0);
        for cell in (0..disc.n_cells()).filter(|&k| regions.contains(&disc.cell_region[k])) {
            self.like
                .quadrature(cell, &fluxpick_solver::quadrature::DEGREE2, |v, dv| {
                    area += if axi { dv / (TAU * v.x[0]) } else { dv };
                    volume += dv * depth;
                });
        }
        (area, volume)
    }
}
