//! Number and tick labels, and the ticks of a log axis.

/// A tick label for `v` on an axis spanning `span`: enough decimals to tell ticks apart,
/// without trailing zeros.
pub fn number_label(v: f64, span: f64) -> String {
    let decimals = if span.is_finite() && span > 0.0 {
        (2.0 - span.log10().floor()).clamp(0.0, 8.0) as usize
    } else {
        2
    };
    trim_zeros(format!("{v:.decimals$}"))
}

/// A label for a time in seconds on a log axis, to two significant digits.
pub fn seconds_label(v: f64) -> String {
    if !(v.is_finite() && v > 0.0) {
        return "0".into();
    }
    let decimals = (1.0 - v.log10().floor()).clamp(0.0, 9.0) as usize;
    trim_zeros(format!("{v:.decimals$}"))
}

/// `s` without trailing zeros after a decimal point, and "0" rather than "-0".
fn trim_zeros(s: String) -> String {
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    };
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// Ticks for a log axis over `[lo, hi]`: 1, 2 and 5 times powers of ten, or only the powers when
/// that would crowd the axis; the two ends when the range holds fewer than two such values.
/// The drawing library's own log ticks are powers of ten only, and a range inside one decade
/// gets none.
pub fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite() && lo > 0.0 && hi > lo) {
        return vec![lo];
    }
    let mut ticks = Vec::new();
    let (k0, k1) = (lo.log10().floor() as i32, hi.log10().ceil() as i32);
    for k in k0..=k1 {
        for m in [1.0, 2.0, 5.0] {
            let v = m * 10f64.powi(k);
            if v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9) {
                ticks.push(v);
            }
        }
    }
    if ticks.len() > 12 {
        ticks.retain(|v| {
            let l = v.log10();
            (l - l.round()).abs() < 1e-9
        });
    }
    if ticks.len() < 2 {
        return vec![lo, hi];
    }
    ticks
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_ticks_use_one_two_five() {
        assert_eq!(log_ticks(0.01, 1.0).len(), 7); // .01 .02 .05 .1 .2 .5 1
        let t = log_ticks(0.3, 0.45);
        assert_eq!(t, vec![0.3, 0.45]);
        let t = log_ticks(1e-4, 1e3);
        assert_eq!(t.len(), 8); // powers only: 1e-4 ..= 1e3
    }

    #[test]
    fn log_ticks_by_hand() {
        // 0.15 to 3: 0.2, 0.5, 1, 2 (0.1 and 5 lie outside).
        let t = log_ticks(0.15, 3.0);
        let want = [0.2, 0.5, 1.0, 2.0];
        assert_eq!(t.len(), want.len(), "{t:?}");
        for (a, b) in t.iter().zip(want) {
            assert!((a - b).abs() < 1e-12, "{t:?}");
        }
        // Ends that hold a tick exactly keep it: 1 to 10 is 1, 2, 5, 10.
        assert_eq!(log_ticks(1.0, 10.0), vec![1.0, 2.0, 5.0, 10.0]);
        // No range: the low end alone.
        assert_eq!(log_ticks(2.0, 2.0), vec![2.0]);
        assert_eq!(log_ticks(0.0, 1.0), vec![0.0]);
    }

    #[test]
    fn labels_drop_trailing_zeros() {
        assert_eq!(seconds_label(0.020000000000000004), "0.02");
        assert_eq!(seconds_label(5.0), "5");
        assert_eq!(seconds_label(0.45), "0.45");
        assert_eq!(seconds_label(f64::NAN), "0");
        assert_eq!(number_label(1.5, 10.0), "1.5");
        assert_eq!(number_label(1.002, 0.02), "1.002");
        assert_eq!(number_label(-0.0001, 1000.0), "0");
        assert_eq!(number_label(200.0, 1000.0), "200");
        assert_eq!(number_label(0.126, f64::NAN), "0.13");
    }
}
