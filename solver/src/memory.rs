//! Memory estimates before large allocations, checked against a ceiling.
//!
//! Whatever allocates in proportion to more than the number of nodes (a full cost matrix, the
//! edge table of branch and bound, the dynamic programme's table, the matrix of the
//! assignment bound, the sky adapter's slew matrix) first states how many bytes it will need and
//! calls [`check`]. Beyond the ceiling it refuses with a [`MemoryError`] that says what needed
//! how much, instead of letting the operating system end the process halfway through a run.
//!
//! The ceiling is one per process: by default three quarters of the physical memory (as the
//! system reports it; 8 GiB where it cannot be read), changed with [`set_ceiling`] (the `wend`
//! command's `--memory-limit` and the `WEND_MEMORY_LIMIT` environment variable do this).
//! Estimates count the large buffers only, so they are lower bounds of the whole process's use.

use bytesize::ByteSize;
use std::sync::atomic::{AtomicUsize, Ordering};
use sysinfo::{MemoryRefreshKind, RefreshKind, System};

/// Ceiling when the physical memory cannot be read: 8 GiB.
pub(crate) const FALLBACK_CEILING: usize = 8 << 30;

/// 0 until set (or first read), then the ceiling in bytes.
static CEILING: AtomicUsize = AtomicUsize::new(0);

/// A large allocation that would pass the ceiling; nothing was allocated.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error(
    "{what} would need {}, more than the memory ceiling of {} \
     (raise it with --memory-limit or WEND_MEMORY_LIMIT if the machine has the memory)",
    human(*needed_bytes), human(*ceiling_bytes)
)]
pub struct MemoryError {
    /// What the memory was for, e.g. "the full cost matrix of 200000 nodes".
    pub what: String,
    /// Bytes needed (`usize::MAX` when the count itself overflows).
    pub needed_bytes: usize,
    /// The ceiling in force.
    pub ceiling_bytes: usize,
}

/// The ceiling in force, in bytes.
///
/// ```
/// assert!(wend::memory::ceiling() >= 1);
/// ```
pub fn ceiling() -> usize {
    match CEILING.load(Ordering::Relaxed) {
        0 => {
            let c = default_ceiling();
            // Another thread may have set one meanwhile; keep theirs.
            let _ = CEILING.compare_exchange(0, c, Ordering::Relaxed, Ordering::Relaxed);
            CEILING.load(Ordering::Relaxed)
        }
        c => c,
    }
}

/// Sets the ceiling for the whole process (at least 1 byte).
///
/// ```
/// wend::memory::set_ceiling(64 << 20);
/// assert_eq!(wend::memory::ceiling(), 64 << 20);
/// ```
pub fn set_ceiling(bytes: usize) {
    CEILING.store(bytes.max(1), Ordering::Relaxed);
}

/// Three quarters of the physical memory, or [`FALLBACK_CEILING`].
pub(crate) fn default_ceiling() -> usize {
    physical_memory().map_or(FALLBACK_CEILING, |b| b / 4 * 3)
}

/// Physical memory in bytes, where the system tells.
pub(crate) fn physical_memory() -> Option<usize> {
    let ram = RefreshKind::nothing().with_memory(MemoryRefreshKind::nothing().with_ram());
    let bytes = System::new_with_specifics(ram).total_memory();
    usize::try_from(bytes).ok().filter(|&b| b > 0)
}

/// Bytes of `count` items of `item_bytes` each, `usize::MAX` on overflow.
///
/// ```
/// assert_eq!(wend::memory::bytes_of(1000, 8), 8000);
/// assert_eq!(wend::memory::bytes_of(usize::MAX, 8), usize::MAX);
/// ```
pub fn bytes_of(count: usize, item_bytes: usize) -> usize {
    count.saturating_mul(item_bytes)
}

/// Bytes of an `n` by `n` table of `item_bytes` each, `usize::MAX` on overflow.
///
/// ```
/// assert_eq!(wend::memory::square(1000, 8), 8_000_000);
/// ```
pub fn square(n: usize, item_bytes: usize) -> usize {
    n.checked_mul(n)
        .and_then(|c| c.checked_mul(item_bytes))
        .unwrap_or(usize::MAX)
}

/// Refuses `needed_bytes` beyond the ceiling in force, naming `what` (called only when
/// refusing, so that building the text costs nothing otherwise).
///
/// ```
/// use wend::memory;
///
/// memory::set_ceiling(1 << 30);
/// assert!(memory::check(1 << 20, || "a small table".into()).is_ok());
/// let refused = memory::check(memory::square(100_000, 8), || "the matrix".into()).unwrap_err();
/// assert!(refused.to_string().starts_with("the matrix would need 74.5 GiB"));
/// ```
pub fn check(needed_bytes: usize, what: impl FnOnce() -> String) -> Result<(), MemoryError> {
    check_against(needed_bytes, ceiling(), what)
}

/// [`check`] against an explicit ceiling.
///
/// ```
/// assert!(wend::memory::check_against(100, 100, || "exactly enough".into()).is_ok());
/// assert!(wend::memory::check_against(101, 100, || "one byte too many".into()).is_err());
/// ```
pub fn check_against(
    needed_bytes: usize,
    ceiling_bytes: usize,
    what: impl FnOnce() -> String,
) -> Result<(), MemoryError> {
    if needed_bytes <= ceiling_bytes {
        Ok(())
    } else {
        Err(MemoryError {
            what: what(),
            needed_bytes,
            ceiling_bytes,
        })
    }
}

/// Reads a size: a number of bytes with an optional unit, `K`, `M`, `G` or `T` (powers of 1024;
/// `KiB`, `MB` and the like are read the same way), e.g. `512M`, `6G`, `1.5T`, `1000000`.
///
/// ```
/// use wend::memory::parse_size;
///
/// assert_eq!(parse_size("512M"), Ok(512 << 20));
/// assert_eq!(parse_size("1.5k"), Ok(1536));
/// assert!(parse_size("6X").is_err());
/// ```
pub fn parse_size(text: &str) -> Result<usize, String> {
    let t = text.trim();
    let split = t
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .unwrap_or(t.len());
    let (number, unit) = t.split_at(split);
    let bad =
        || format!("{text:?} is not a size; write bytes, or a number with K, M, G or T (e.g. 6G)");
    // Every unit is a power of 1024, whichever way it is written.
    let unit = match unit.trim().to_ascii_uppercase().as_str() {
        "" | "B" => "B",
        "K" | "KB" | "KIB" => "KiB",
        "M" | "MB" | "MIB" => "MiB",
        "G" | "GB" | "GIB" => "GiB",
        "T" | "TB" | "TIB" => "TiB",
        _ => return Err(bad()),
    };
    let size: ByteSize = format!("{number} {unit}").parse().map_err(|_| bad())?;
    if size.as_u64() == 0 {
        return Err(format!("{text:?}: the size must be at least one byte"));
    }
    Ok(usize::try_from(size.as_u64()).unwrap_or(usize::MAX))
}

/// `bytes` for people: B, KiB, MiB, GiB or TiB.
pub(crate) fn human(bytes: usize) -> String {
    if bytes == usize::MAX {
        return "more bytes than a 64-bit count holds".to_string();
    }
    ByteSize(bytes as u64).display().iec().to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_read_with_binary_units() {
        assert_eq!(parse_size("1000").unwrap(), 1000);
        assert_eq!(parse_size("512M").unwrap(), 512 << 20);
        assert_eq!(parse_size("6G").unwrap(), 6 << 30);
        assert_eq!(parse_size("6 GiB").unwrap(), 6 << 30);
        assert_eq!(parse_size("1.5k").unwrap(), 1536);
        assert_eq!(parse_size("2T").unwrap(), 2 << 40);
        for bad in ["", "G", "-1G", "1.2.3", "4X", "0", "nan"] {
            assert!(parse_size(bad).is_err(), "{bad:?}");
        }
    }

    #[test]
    fn estimates_saturate_and_refuse_beyond_the_ceiling() {
        assert_eq!(square(1000, 8), 8_000_000);
        assert_eq!(square(usize::MAX / 2, 1), usize::MAX);
        assert_eq!(bytes_of(usize::MAX, 2), usize::MAX);
        assert!(check_against(100, 100, || unreachable!()).is_ok());
        let e = check_against(square(200_000, 8), 1 << 30, || "the matrix".into()).unwrap_err();
        assert_eq!(e.needed_bytes, 320_000_000_000);
        let text = e.to_string();
        assert!(text.contains("the matrix would need 298.0 GiB"), "{text}");
        assert!(text.contains("ceiling of 1.0 GiB"), "{text}");
    }

    #[test]
    fn human_sizes() {
        assert_eq!(human(12), "12 B");
        assert_eq!(human(1536), "1.5 KiB");
        assert_eq!(human(3 << 30), "3.0 GiB");
    }

    #[test]
    fn sizes_saturate_and_round_down_to_whole_bytes() {
        assert_eq!(parse_size("99999999999999999999").unwrap(), usize::MAX);
        assert_eq!(parse_size("1.5").unwrap(), 1);
        assert_eq!(parse_size("2 kb").unwrap(), 2048);
        assert!(parse_size("0.5").is_err());
        assert_eq!(human(1023), "1023 B");
        assert_eq!(human(usize::MAX), "more bytes than a 64-bit count holds");
    }

    #[cfg(target_os = "linux")]
    #[test]
    fn physical_memory_is_the_kernels_total() {
        let info = std::fs::read_to_string("/proc/meminfo").unwrap();
        let line = info.lines().find(|l| l.starts_with("MemTotal:")).unwrap();
        let kib: usize = line.split_whitespace().nth(1).unwrap().parse().unwrap();
        assert_eq!(physical_memory(), Some(kib * 1024));
    }
}
