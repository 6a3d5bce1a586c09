//! Gives the shared library its versioned SONAME, `libtieline.so.<major>`, so programs linked
//! against it record that name (not the path of the build tree) and a later incompatible
//! major version can be installed beside it.

fn main() {
    let os = std::env::var("CARGO_CFG_TARGET_OS").unwrap_or_default();
    if os == "linux" || os == "freebsd" || os == "android" {
        let major = std::env::var("CARGO_PKG_VERSION_MAJOR").unwrap_or_else(|_| "0".into());
        println!("cargo:rustc-cdylib-link-arg=-Wl,-soname,libtieline.so.{major}");
    }
    println!("cargo:rerun-if-changed=build.rs");
}
