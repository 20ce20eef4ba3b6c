//! `count`: a number and its noun, singular for one (`1 scan`, `2 scans`).

/// `n` and `noun`, with an `s` added unless `n` is 1: `count(1, "scan")` is
/// `1 scan`, `count(0, "TAP port")` is `0 TAP ports`. For nouns whose plural
/// is the singular plus `s`, which is every noun the reports count.
pub fn count(n: usize, noun: &str) -> String {
    format!("{n} {noun}{}", if n == 1 { "" } else { "s" })
}

#[cfg(test)]
mod tests {
    use super::count;

    #[test]
    fn one_is_singular_and_every_other_number_plural() {
        assert_eq!(count(1, "scan"), "1 scan");
        assert_eq!(count(0, "scan"), "0 scans");
        assert_eq!(count(2, "TAP port"), "2 TAP ports");
        assert_eq!(count(11, "device"), "11 devices");
    }
}
