//! Gives the shared library its SONAME, so programs linked against it record `libtieline.so`
//! rather than the path of the build tree.

fn main() {
    let os = std::env::var("CARGO_CFG_TARGET_OS").unwrap_or_default();
    if os == "linux" || os == "freebsd" || os == "android" {
        println!("cargo:rustc-cdylib-link-arg=-Wl,-soname,libtieline.so");
    }
    println!("cargo:rerun-if-changed=build.rs");
}
