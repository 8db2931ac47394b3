//! Embeds the build commit (for provenance) as `OXBIND_BUILD_COMMIT`:
//! `git rev-parse HEAD` when built inside a git checkout, "unknown" otherwise.

use std::process::Command;

fn main() {
    let commit = Command::new("git")
        .args(["rev-parse", "HEAD"])
        .output()
        .ok()
        .filter(|out| out.status.success())
        .and_then(|out| String::from_utf8(out.stdout).ok())
        .map(|s| s.trim().to_owned())
        .filter(|s| !s.is_empty())
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
