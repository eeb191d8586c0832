//! Resource limits: a case that would need more triangles or memory than allowed is refused
//! before meshing, with the estimate and how to coarsen it.
//!
//! The estimate is the case's rough triangle count ([`crate::case::estimated_elements`],
//! good to a factor of about two) and a memory model fitted to peak resident memory measured
//! on whole solves (the constants below, DEVELOPERS.md "Robustness"). The memory allowed is
//! `--max-memory GB` when given, else [`AVAILABLE_SHARE`] of the memory the kernel reports
//! available (`MemAvailable` in /proc/meminfo) when the process starts; a sweep shares it
//! among the points it solves at once. `--max-triangles N` caps the triangle count too.
//! The limits are a value ([`Limits`]) that the command line resolves once and passes down
//! in the run's settings (`Settings`).

use crate::case::{element_shares, Case, Order, Share};

/// Share of the available memory a run may plan to use (the rest for the system and for
/// the estimate's error).
pub const AVAILABLE_SHARE: f64 = 0.8;
/// Memory of the process before any mesh (binary, thread pool, case), bytes: peak RSS of
/// the smallest solves measured was 35 MB.
pub const BASE_BYTES: f64 = 30e6;
// Peak memory per *estimated* triangle (what is known before meshing), bytes, rounded up
// from peak RSS of `fluxpick solve` on the example cases with every mesh size scaled down
// (DEVELOPERS.md "Robustness"): the rod example at 2nd order 3380 (62k estimated
// triangles), 3760 (248k), 3770 (993k); at 1st order 560, 1000 (248k); the feeder pair
// (eddy currents) at 2nd order 7710 (17k), 6650 (69k), 6060 (274k); at 1st order 1160,
// 2430, 2110. Cases whose estimate misses much of the mesh need more (see DEVELOPERS.md).
/// Peak memory per estimated triangle, bytes: static solves with 2nd-order elements.
pub const BYTES_PER_TRIANGLE_STATIC_P2: f64 = 4000.0;
/// Peak memory per estimated triangle, bytes: static solves with 1st-order elements.
pub const BYTES_PER_TRIANGLE_STATIC_P1: f64 = 1400.0;
/// Peak memory per estimated triangle, bytes: eddy-current (time-harmonic) solves, 2nd order.
pub const BYTES_PER_TRIANGLE_EDDY_P2: f64 = 8000.0;
/// Peak memory per estimated triangle, bytes: eddy-current solves, 1st order.
pub const BYTES_PER_TRIANGLE_EDDY_P1: f64 = 2600.0;

/// The resource limits of a run, resolved once from the command line and passed down.
#[derive(Clone, Debug, PartialEq)]
pub struct Limits {
    /// `--max-triangles`.
    pub max_triangles: Option<f64>,
    /// `--max-memory` (bytes); None: [`AVAILABLE_SHARE`] of the memory available.
    pub max_memory_bytes: Option<f64>,
    /// How many solves run at once (a sweep's threads): each gets its share of the memory.
    pub concurrent: usize,
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            max_triangles: None,
            max_memory_bytes: None,
            concurrent: 1,
        }
    }
}

impl Limits {
    /// The limits of `--max-triangles N` and `--max-memory GB` (10⁹ bytes).
    pub fn new(max_triangles: Option<u64>, max_memory_gb: Option<f64>) -> Limits {
        Limits {
            max_triangles: max_triangles.map(|n| n as f64),
            max_memory_bytes: max_memory_gb.map(|g| g * 1e9),
            concurrent: 1,
        }
    }

    /// The same limits shared by `n` solves at once.
    pub fn shared_by(&self, n: usize) -> Limits {
        Limits {
            concurrent: n.max(1),
            ..self.clone()
        }
    }
}

/// `MemAvailable` of /proc/meminfo, bytes (None where there is no such file).
pub fn available_memory() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    parse_meminfo(&text)
}

fn parse_meminfo(text: &str) -> Option<f64> {
    let line = text.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let mut it = line.split_whitespace().skip(1);
    let v: f64 = it.next()?.parse().ok()?;
    match it.next() {
        Some("kB") => Some(v * 1024.0),
        None => Some(v),
        Some(_) => None,
    }
}

/// What a case is expected to need.
#[derive(Clone, Debug, PartialEq)]
pub struct Estimate {
    pub triangles: f64,
    pub bytes: f64,
}

/// The rough triangle count and peak memory of one solve of `case`.
pub fn estimate(case: &Case) -> Estimate {
    let triangles = crate::case::estimated_elements(case);
    let eddy = crate::build::has_eddy_currents(case);
    let per = match (eddy, case.element_order) {
        (false, Order::Linear) => BYTES_PER_TRIANGLE_STATIC_P1,
        (false, Order::Quadratic) => BYTES_PER_TRIANGLE_STATIC_P2,
        (true, Order::Linear) => BYTES_PER_TRIANGLE_EDDY_P1,
        (true, Order::Quadratic) => BYTES_PER_TRIANGLE_EDDY_P2,
    };
    Estimate {
        triangles,
        bytes: BASE_BYTES + per * triangles,
    }
}

/// A case refused by the limits.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("the case would need about {} triangles and {} of memory, more than allowed ({limit}); {advice}", sig(.estimate.triangles), gb(.estimate.bytes))]
pub struct TooLarge {
    pub estimate: Estimate,
    /// The limit that was passed, in words.
    pub limit: String,
    /// How to coarsen the case or raise the limit.
    pub advice: String,
    /// Factor by which every mesh size must at least grow to fit.
    pub coarsen_all: f64,
}

fn sig(x: f64) -> String {
    if x >= 1e4 {
        format!("{x:.2e}")
    } else {
        format!("{x:.0}")
    }
}

fn gb(b: f64) -> String {
    format!("{:.2} GB", b / 1e9)
}

/// Refuses `case` when its estimate passes the triangle or memory limit.
pub fn check(case: &Case, s: &Limits) -> Result<(), TooLarge> {
    let est = estimate(case);
    let (memory, from) = match s.max_memory_bytes {
        Some(m) => (Some(m), "--max-memory".to_string()),
        None => (
            available_memory().map(|a| AVAILABLE_SHARE * a),
            format!("{:.0} % of the memory available", 100.0 * AVAILABLE_SHARE),
        ),
    };
    let memory = memory.map(|m| m / s.concurrent as f64);
    let per_triangle = (est.bytes - BASE_BYTES) / est.triangles.max(1.0);
    // the triangle count the memory allows, and the smaller of the two limits
    let by_memory = memory.map(|m| ((m - BASE_BYTES) / per_triangle).max(0.0));
    let (limit_triangles, limit) = match (s.max_triangles, by_memory) {
        (Some(t), Some(m)) if m < t => (m, memory_words(memory, &from, s.concurrent)),
        (Some(t), _) => (t, format!("at most {} triangles (--max-triangles)", sig(t))),
        (None, Some(m)) => (m, memory_words(memory, &from, s.concurrent)),
        (None, None) => return Ok(()),
    };
    if est.triangles <= limit_triangles {
        return Ok(());
    }
    let coarsen_all = (est.triangles / limit_triangles.max(1.0)).sqrt();
    let shares = element_shares(case);
    let (who, most) = shares
        .iter()
        .copied()
        .fold((Share::Air, f64::NEG_INFINITY), |b, s| {
            if s.1 > b.1 {
                s
            } else {
                b
            }
        });
    let rest = est.triangles - most;
    // the count goes as 1/size²: the largest share alone would have to shrink to
    // (limit - rest), i.e. its mesh size grow by sqrt(most / (limit - rest))
    let alone = (limit_triangles > rest).then(|| (most / (limit_triangles - rest)).sqrt());
    let mut advice = format!(
        "coarsen the mesh: multiply every mesh size by at least {coarsen_all:.2} (the triangle count goes as 1/size²)"
    );
    if let Some(f) = alone {
        advice += &format!(
            ", or only {} by {f:.2} ({:.0} % of the triangles)",
            share_name(case, who),
            100.0 * most / est.triangles
        );
    } else {
        advice += &format!(
            "; the largest share is {} ({:.0} %)",
            share_name(case, who),
            100.0 * most / est.triangles
        );
    }
    advice += "; or raise the limit with --max-triangles N or --max-memory GB";
    Err(TooLarge {
        estimate: est,
        limit,
        advice,
        coarsen_all,
    })
}

fn memory_words(memory: Option<f64>, from: &str, concurrent: usize) -> String {
    let m = memory.unwrap_or(0.0);
    if concurrent > 1 {
        format!(
            "{} per solve: {from}, shared by {concurrent} solves at once",
            gb(m)
        )
    } else {
        format!("{} of memory: {from}", gb(m))
    }
}

fn share_name(case: &Case, s: Share) -> String {
    match s {
        Share::Air => "the air's `domain.mesh_size`".to_string(),
        Share::Part(i) => format!("`part[{i}].mesh_size` ({})", case.parts[i].name),
        Share::Conductor(i) => {
            format!("`conductor[{i}].mesh_size` ({})", case.conductors[i].name)
        }
        Share::Coil(i) => format!("`coil[{i}].mesh_size` ({})", case.coils[i].name),
    }
}

#[cfg(test)]
mod tests {
    use super::parse_meminfo;

    #[test]
    fn meminfo_available_line() {
        let text =
            "MemTotal:       24000000 kB\nMemFree:        1000 kB\nMemAvailable:   20000000 kB\n";
        assert_eq!(parse_meminfo(text), Some(20000000.0 * 1024.0));
        assert_eq!(parse_meminfo("MemTotal: 5 kB\n"), None);
    }
}
