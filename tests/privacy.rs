//! Notes never leave the machine: no HTTP, socket or TLS client crate may enter the
//! dependency tree of the library and binary.

use std::process::Command;

/// Crates whose job is talking over a network (HTTP clients and servers, TLS stacks,
/// async socket runtimes). Common practice, no source: the list names the widely used ones
/// on crates.io by their purpose.
const NETWORK_CRATES: &[&str] = &[
    "reqwest",
    "hyper",
    "h2",
    "h3",
    "ureq",
    "curl",
    "curl-sys",
    "isahc",
    "surf",
    "attohttpc",
    "http-client",
    "awc",
    "actix-web",
    "axum",
    "warp",
    "tiny_http",
    "tokio",
    "async-std",
    "mio",
    "socket2",
    "rustls",
    "native-tls",
    "openssl",
    "openssl-sys",
    "tungstenite",
    "ws",
    "quinn",
    "smol",
    "libp2p",
    "trust-dns-resolver",
    "hickory-resolver",
];

#[test]
fn no_network_crate_in_the_dependency_tree() {
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let out = Command::new(cargo)
        .args([
            "tree",
            "--offline",
            "--edges",
            "normal,build",
            "--prefix",
            "none",
            "--format",
            "{p}",
            "--manifest-path",
            concat!(env!("CARGO_MANIFEST_DIR"), "/Cargo.toml"),
        ])
        .output()
        .expect("run cargo tree");
    assert!(
        out.status.success(),
        "cargo tree failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let tree = String::from_utf8_lossy(&out.stdout);
    let names: Vec<&str> = tree
        .lines()
        .filter_map(|l| l.split_whitespace().next())
        .collect();
    assert!(
        names.contains(&"tidemark"),
        "unexpected cargo tree output: {tree}"
    );
    assert!(
        names.contains(&"rayon"),
        "unexpected cargo tree output: {tree}"
    );
    let found: Vec<&&str> = NETWORK_CRATES
        .iter()
        .filter(|c| names.contains(c))
        .collect();
    assert!(
        found.is_empty(),
        "network crates in the dependency tree: {found:?}"
    );
}
