//! Embeds the build commit (for provenance) as `OXBIND_BUILD_COMMIT`: the
//! `OXBIND_BUILD_COMMIT` environment variable when the build sets it (a
//! container build, which has no `.git`), else `git rev-parse HEAD` inside a
//! git checkout, else "unknown".

use std::process::Command;

/// Longest commit id accepted from the environment (a SHA-256 object id is 64
/// hexadecimal digits).
const MAX_COMMIT_LEN: usize = 64;

/// The commit given by the environment, if it looks like a git object id.
fn commit_from_environment() -> Option<String> {
    let given = std::env::var("OXBIND_BUILD_COMMIT").ok()?;
    let given = given.trim();
    (!given.is_empty()
        && given.len() <= MAX_COMMIT_LEN
        && given.bytes().all(|b| b.is_ascii_hexdigit()))
    .then(|| given.to_ascii_lowercase())
}

fn main() {
    let commit = commit_from_environment()
        .or_else(|| {
            Command::new("git")
                .args(["rev-parse", "HEAD"])
                .output()
                .ok()
                .filter(|out| out.status.success())
                .and_then(|out| String::from_utf8(out.stdout).ok())
                .map(|s| s.trim().to_owned())
                .filter(|s| !s.is_empty())
        })
        .unwrap_or_else(|| "unknown".to_owned());
    println!("cargo:rustc-env=OXBIND_BUILD_COMMIT={commit}");
    // Re-run when HEAD moves; only watch files that exist, or cargo would
    // re-run this script on every build outside a checkout.
    for watched in ["../.git/HEAD", "../.git/refs/heads", "../.git/packed-refs"] {
        if std::path::Path::new(watched).exists() {
            println!("cargo:rerun-if-changed={watched}");
        }
    }
    println!("cargo:rerun-if-env-changed=OXBIND_BUILD_COMMIT");
}
