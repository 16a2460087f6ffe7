//! Small-sample statistics for success rates.

/// z for a two-sided 95 % interval.
pub const Z95: f64 = 1.959_963_984_540_054;

/// Wilson score interval for `k` successes in `n` trials at the given z (Wilson, JASA
/// 22(158):209–212, 1927): centre (p̂ + z²/2n)/(1 + z²/n), half-width
/// z/(1 + z²/n)·√(p̂(1−p̂)/n + z²/4n²). Stays inside [0, 1] and is not empty at 0/n or n/n,
/// unlike the normal approximation. `None` when `n` is 0.
pub fn wilson(k: u64, n: u64, z: f64) -> Option<(f64, f64)> {
    if n == 0 || k > n {
        return None;
    }
    let (k, n) = (k as f64, n as f64);
    let p = k / n;
    let z2 = z * z;
    let denom = 1.0 + z2 / n;
    let centre = (p + z2 / (2.0 * n)) / denom;
    let half = z / denom * (p * (1.0 - p) / n + z2 / (4.0 * n * n)).sqrt();
    Some(((centre - half).max(0.0), (centre + half).min(1.0)))
}

/// The median of values with weights (each value counted `weight` times); `None` when empty.
/// For an even total the lower middle value is taken.
pub fn weighted_median(mut items: Vec<(f64, u64)>) -> Option<f64> {
    items.retain(|(_, w)| *w > 0);
    if items.is_empty() {
        return None;
    }
    items.sort_by(|a, b| a.0.total_cmp(&b.0));
    let total: u64 = items.iter().map(|(_, w)| w).sum();
    let half = total.div_ceil(2);
    let mut seen = 0;
    for (v, w) in &items {
        seen += w;
        if seen >= half {
            return Some(*v);
        }
    }
    items.last().map(|(v, _)| *v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edges_stay_inside_zero_and_one() {
        let (lo, hi) = wilson(0, 4, Z95).unwrap();
        assert_eq!(lo, 0.0);
        assert!((hi - 0.489_891).abs() < 1e-6);
        let (lo, hi) = wilson(4, 4, Z95).unwrap();
        assert!((lo - 0.510_109).abs() < 1e-6 && hi == 1.0);
        assert_eq!(wilson(0, 0, Z95), None);
        assert_eq!(wilson(5, 4, Z95), None);
    }

    #[test]
    fn weighted_median_counts_weights() {
        assert_eq!(
            weighted_median(vec![(10.0, 1), (50.0, 3), (200.0, 1)]),
            Some(50.0)
        );
        assert_eq!(weighted_median(vec![(10.0, 1), (50.0, 1)]), Some(10.0));
        assert_eq!(weighted_median(vec![(10.0, 0)]), None);
    }
}
