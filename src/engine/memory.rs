//! The memory budget for sample storage.

/// Bytes of memory of this machine (MemTotal of /proc/meminfo), if known.
pub(crate) fn machine_memory() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    let line = text.lines().find(|l| l.starts_with("MemTotal:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}

/// The default budget: half of the machine's memory, or 4 GiB when it cannot be read.
pub(crate) fn default_budget() -> u64 {
    machine_memory().map_or(4 << 30, |m| m / 2)
}

/// Bytes of sample storage a run needs: 8 bytes per trial per stored column, plus the two
/// tails the coverage intervals sort (at most 2 (1 - p) M values of one column at a time).
pub(crate) fn sample_bytes(trials: u64, columns: usize, coverage: f64) -> u64 {
    let per_trial = 8.0 * columns as f64 + 16.0 * (1.0 - coverage) * 1.2;
    (trials as f64 * per_trial).ceil() as u64
}

/// Parse "8GiB", "500 MB", "1.5 GiB", "2000000000".
pub(crate) fn parse_bytes(text: &str) -> Option<u64> {
    let t = text.trim();
    let split = t
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .unwrap_or(t.len());
    let (num, unit) = t.split_at(split);
    let value: f64 = num.parse().ok()?;
    let factor = match unit.trim().to_ascii_lowercase().as_str() {
        "" | "b" => 1.0,
        "k" | "kb" => 1e3,
        "kib" => 1024.0,
        "m" | "mb" => 1e6,
        "mib" => 1024.0 * 1024.0,
        "g" | "gb" => 1e9,
        "gib" => 1024.0 * 1024.0 * 1024.0,
        "t" | "tb" => 1e12,
        "tib" => 1024f64.powi(4),
        _ => return None,
    };
    let bytes = value * factor;
    (bytes.is_finite() && bytes >= 1.0).then_some(bytes as u64)
}

/// "1.50 GiB".
pub(crate) fn format_bytes(bytes: u64) -> String {
    let b = bytes as f64;
    if b >= (1u64 << 30) as f64 {
        format!("{:.2} GiB", b / (1u64 << 30) as f64)
    } else if b >= (1u64 << 20) as f64 {
        format!("{:.1} MiB", b / (1u64 << 20) as f64)
    } else {
        format!("{bytes} bytes")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_sizes() {
        assert_eq!(parse_bytes("8GiB"), Some(8 << 30));
        assert_eq!(parse_bytes("500 MB"), Some(500_000_000));
        assert_eq!(parse_bytes("1.5 GiB"), Some(3 << 29));
        assert_eq!(parse_bytes("12"), Some(12));
        assert_eq!(parse_bytes("lots"), None);
        assert_eq!(parse_bytes("-3 GB"), None);
    }
}
