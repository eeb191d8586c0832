//! Fill-reducing ordering of the unknowns by nested dissection: METIS (`METIS_NodeND`,
//! bundled C source, Apache-2.0) orders the graph of the vertex unknowns of the linear mesh,
//! and every edge unknown of a second-order space is placed just before the earlier of its
//! two vertices. A vertex separator of the linear mesh, with the midpoints of the edges inside
//! it, separates the second-order graph too; an edge from a separator vertex into a part is
//! numbered with that part, so the separators do not grow. Ordering the vertex graph (a
//! quarter of the unknowns and a ninth of the couplings at second order) instead of the whole
//! pattern is what keeps the ordering cheap.
//!
//! Measured on the 1M-unknown planar benchmark (2026-12-03): METIS on the whole second-order
//! pattern gave 63.5M values in the factor in 10.2 s of ordering; on the vertex graph 56.1M
//! in about 1.8 s; faer's minimum degree 90.0M in about 1 s. Two nested dissections of our own
//! (coordinate bisection; breadth-first level sets) gave more fill than minimum degree: a good
//! separator needs the multilevel coarsening and refinement METIS does.

use crate::discretisation::{Discretisation, Order, FIXED};
use crate::SolveError;

static METIS_LOCK: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// Below this many vertex unknowns the ordering is left to approximate minimum degree.
pub const MIN_VERTICES: usize = 2000;

/// Permutation of the unknowns, `perm[new] = old`, by nested dissection; `None` (minimum
/// degree) for first-order spaces and for small problems.
///
/// At first order the vertex graph is the whole pattern and METIS costs more than it saves:
/// on a 976k-unknown first-order mesh (1.95M triangles) it took 9.4 s here, beside an
/// assembly of 1.6 s, for a factorisation of 3.5 s instead of 5.6 s (measured 2026-12-03).
/// At second order it orders a quarter of the unknowns, in 1.8 s at 1M unknowns.
pub fn nested_dissection(d: &Discretisation) -> Result<Option<Vec<usize>>, SolveError> {
    if d.order == Order::Linear {
        return Ok(None);
    }
    dissect(d)
}

/// The ordering itself, for either element order (first order: tests and measurements).
pub fn dissect(d: &Discretisation) -> Result<Option<Vec<usize>>, SolveError> {
    let n = d.n_dofs;
    let npe = d.npe();
    let nc = d.n_cells();
    // compact ids of the vertex unknowns
    const NONE: u32 = u32::MAX;
    let mut gid = vec![NONE; n];
    let mut nv = 0u32;
    for node in 0..d.n_vertices {
        let dof = d.node_dof[node];
        if dof != FIXED && gid[dof as usize] == NONE {
            gid[dof as usize] = nv;
            nv += 1;
        }
    }
    let nv = nv as usize;
    if nv < MIN_VERTICES {
        return Ok(None);
    }
    // graph of the vertex unknowns: both directions of each cell edge, sorted and unique
    let corner = |c: usize, i: usize| -> u32 {
        let dof = d.node_dof[d.cells[c * npe + i] as usize];
        if dof == FIXED {
            NONE
        } else {
            gid[dof as usize]
        }
    };
    // the cell's edges between two vertex unknowns
    let cell_edges = |c: usize| {
        let g = [corner(c, 0), corner(c, 1), corner(c, 2)];
        [(0, 1), (1, 2), (2, 0)]
            .into_iter()
            .map(move |(a, b)| (g[a], g[b]))
            .filter(|&(u, v)| u != NONE && v != NONE && u != v)
    };
    let mut degree = vec![0u32; nv + 1];
    for c in 0..nc {
        for (u, v) in cell_edges(c) {
            degree[u as usize + 1] += 1;
            degree[v as usize + 1] += 1;
        }
    }
    for i in 0..nv {
        degree[i + 1] += degree[i];
    }
    let mut fill: Vec<u32> = degree[..nv].to_vec();
    let mut raw = vec![0u32; degree[nv] as usize];
    for c in 0..nc {
        for (a, b) in cell_edges(c) {
            for (u, v) in [(a, b), (b, a)] {
                raw[fill[u as usize] as usize] = v;
                fill[u as usize] += 1;
            }
        }
    }
    let mut xadj: Vec<i32> = Vec::with_capacity(nv + 1);
    let mut adjncy: Vec<i32> = Vec::with_capacity(raw.len() / 2 + 1);
    xadj.push(0);
    for u in 0..nv {
        let row = &mut raw[degree[u] as usize..degree[u + 1] as usize];
        row.sort_unstable();
        let mut last = NONE;
        for &v in row.iter() {
            if v != last {
                adjncy.push(v as i32);
                last = v;
            }
        }
        xadj.push(adjncy.len() as i32);
    }
    drop(raw);
    let mut n_metis = i32::try_from(nv)
        .map_err(|_| SolveError::Factorisation("too many unknowns for the ordering".into()))?;
    let mut perm = vec![0i32; nv];
    let mut iperm = vec![0i32; nv];
    let mut options = [0i32; metis_sys::METIS_NOPTIONS as usize];
    // METIS seeds and draws from one random generator for the whole process: calls from two
    // threads at once (a sweep's points) would interleave its draws and the orderings would
    // depend on timing. One call at a time keeps them deterministic.
    let _one_at_a_time = METIS_LOCK.lock().unwrap_or_else(|e| e.into_inner());
    // SAFETY: METIS_NodeND reads nvtxs, xadj (nvtxs + 1), adjncy (xadj[nvtxs]) and options
    // (METIS_NOPTIONS), and writes perm and iperm (nvtxs each); vwgt may be null. The graph is
    // symmetric without self-loops, as METIS requires.
    let rc = unsafe {
        metis_sys::METIS_SetDefaultOptions(options.as_mut_ptr());
        metis_sys::METIS_NodeND(
            &mut n_metis,
            xadj.as_mut_ptr(),
            adjncy.as_mut_ptr(),
            std::ptr::null_mut(),
            options.as_mut_ptr(),
            perm.as_mut_ptr(),
            iperm.as_mut_ptr(),
        )
    };
    if rc != metis_sys::rstatus_et_METIS_OK {
        return Err(SolveError::Factorisation(format!(
            "nested-dissection ordering failed (METIS status {rc})"
        )));
    }
    // position of each unknown: 2·(vertex position) + 1 for a vertex, 2·(earlier endpoint) for
    // an edge unknown; a free edge between two held vertices goes first
    let mut key = vec![u64::MAX; n];
    for dof in 0..n {
        if gid[dof] != NONE {
            key[dof] = 2 * iperm[gid[dof] as usize] as u64 + 1;
        }
    }
    if d.order == Order::Quadratic {
        let position = |g: u32| {
            if g == NONE {
                u64::MAX
            } else {
                iperm[g as usize] as u64
            }
        };
        for c in 0..nc {
            let g = [corner(c, 0), corner(c, 1), corner(c, 2)];
            for (e, (a, b)) in [(3, (0, 1)), (4, (1, 2)), (5, (2, 0))] {
                let dof = d.node_dof[d.cells[c * npe + e] as usize];
                if dof == FIXED {
                    continue;
                }
                let k = match position(g[a]).min(position(g[b])) {
                    u64::MAX => 0,
                    p => 2 * p,
                };
                let slot = &mut key[dof as usize];
                *slot = (*slot).min(k);
            }
        }
    }
    let mut order: Vec<usize> = (0..n).collect();
    // stable: ties (edges sharing their earlier vertex) keep the unknowns' numbering
    order.sort_by_key(|&i| key[i]);
    Ok(Some(order))
}
