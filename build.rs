//! Tells the tests what this machine has, so that a test that cannot run shows as `ignored` (with
//! the reason and how to fix it) instead of passing without having checked anything.
//!
//! Emitted `cfg`s, each a fact about the build:
//!
//! - `has_browser`: `chromium` and `chromedriver` are on `PATH`; their paths are passed to the
//!   tests as `AIRLEDGER_CHROMIUM` and `AIRLEDGER_CHROMEDRIVER` (`option_env!`).
//! - `has_pdftools`: `pdftotext` and `pdfinfo` (poppler-utils) are on `PATH`, passed as
//!   `AIRLEDGER_PDFTOTEXT` and `AIRLEDGER_PDFINFO`.
//! - `has_real_data`: `AIRLEDGER_REAL_DATA` (the folder of real logger files) is set; the tests
//!   read the folder at run time and fail loudly when it is not there.
//! - `ci`: `CI` is set. Under CI the browser tests are never ignored: when a tool is missing they
//!   run and fail naming it. A failure rather than a build error, so that `cargo clippy` and the
//!   rest of the suite still report.
//!
//! `AIRLEDGER_NO_BROWSER=1` makes this script act as if the browser and poppler tools were not
//! installed, to see what a machine without them reports (`cargo test` shows the browser tests as
//! ignored; with `CI` set as well they fail).
//!
//! A tool installed after the last build is not noticed by itself (installing into `/usr/bin`
//! changes neither `PATH` nor a file this script watches): `touch build.rs` then.

use std::env;
use std::path::{Path, PathBuf};

fn main() {
    println!("cargo::rustc-check-cfg=cfg(has_browser, has_pdftools, has_real_data, ci)");
    println!("cargo::rerun-if-changed=build.rs");
    for var in ["PATH", "CI", "AIRLEDGER_NO_BROWSER", "AIRLEDGER_REAL_DATA"] {
        println!("cargo::rerun-if-env-changed={var}");
    }

    let hidden = env::var_os("AIRLEDGER_NO_BROWSER").is_some_and(|v| !v.is_empty() && v != "0");
    let find = |name: &str| if hidden { None } else { on_path(name) };

    let browser =
        [("AIRLEDGER_CHROMIUM", find("chromium")), ("AIRLEDGER_CHROMEDRIVER", find("chromedriver"))];
    let pdf = [("AIRLEDGER_PDFTOTEXT", find("pdftotext")), ("AIRLEDGER_PDFINFO", find("pdfinfo"))];
    for (var, path) in browser.iter().chain(pdf.iter()) {
        if let Some(p) = path {
            println!("cargo::rerun-if-changed={}", p.display());
            println!("cargo::rustc-env={var}={}", p.display());
        }
    }
    let ci = env::var_os("CI").is_some_and(|v| !v.is_empty());
    if ci {
        println!("cargo::rustc-cfg=ci");
    }
    if browser.iter().all(|(_, p)| p.is_some()) {
        println!("cargo::rustc-cfg=has_browser");
    } else if ci {
        println!("cargo::warning=CI is set but chromium or chromedriver is not on PATH: the browser tests will fail");
    }
    if pdf.iter().all(|(_, p)| p.is_some()) {
        println!("cargo::rustc-cfg=has_pdftools");
    } else if ci {
        println!(
            "cargo::warning=CI is set but pdftotext or pdfinfo is not on PATH: the print test will fail"
        );
    }
    if env::var_os("AIRLEDGER_REAL_DATA").is_some_and(|v| !v.is_empty()) {
        println!("cargo::rustc-cfg=has_real_data");
    }
}

/// The first executable file called `name` in a directory of `PATH`.
fn on_path(name: &str) -> Option<PathBuf> {
    let path = env::var_os("PATH")?;
    env::split_paths(&path).map(|dir| dir.join(name)).find(|p| is_executable(p))
}

#[cfg(unix)]
fn is_executable(p: &Path) -> bool {
    use std::os::unix::fs::PermissionsExt;
    p.metadata().is_ok_and(|m| m.is_file() && m.permissions().mode() & 0o111 != 0)
}

#[cfg(not(unix))]
fn is_executable(p: &Path) -> bool {
    p.is_file()
}
