//! Process exit codes, shared by every command.
//!
//! | code | meaning |
//! |------|---------|
//! | 0 | every input was analysed (and, for `lint`, nothing at the fail level) |
//! | 1 | `lint` only: diagnostics at or above the fail level |
//! | 2 | usage error, or the output could not be written |
//! | 3 | some input was skipped (unreadable, binary, empty, too large, symlink loop ...) |
//!
//! When several apply, the highest-priority one wins: 2, then 3, then 1 — an incomplete
//! run says so even when it also found lint problems.

/// Every input analysed, nothing to report.
pub const OK: i32 = 0;
/// `lint`: diagnostics at or above the fail level.
pub const FINDINGS: i32 = 1;
/// Usage error, or output that could not be written.
pub const USAGE: i32 = 2;
/// Some input was skipped.
pub const SKIPPED: i32 = 3;

/// Combine two exit codes by the priority above (2 > 3 > 1 > 0).
pub fn combine(a: i32, b: i32) -> i32 {
    fn rank(c: i32) -> u8 {
        match c {
            OK => 0,
            FINDINGS => 1,
            SKIPPED => 2,
            _ => 3,
        }
    }
    if rank(a) >= rank(b) {
        a
    } else {
        b
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn priority_usage_then_skipped_then_findings() {
        assert_eq!(combine(OK, FINDINGS), FINDINGS);
        assert_eq!(combine(FINDINGS, SKIPPED), SKIPPED);
        assert_eq!(combine(SKIPPED, FINDINGS), SKIPPED);
        assert_eq!(combine(SKIPPED, USAGE), USAGE);
        assert_eq!(combine(OK, OK), OK);
    }
}
