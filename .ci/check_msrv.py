#!/usr/bin/env python3
"""The declared `rust-version` holds: no locked dependency asks for a newer Rust, and the
toolchain that builds in CI is at least that version. (Uses of the standard library newer than
the declared version are caught by clippy's `incompatible_msrv` lint, which reads the same
field; only one toolchain can be installed here, so an older compiler cannot be run.)

Run from the repository root: python3 .ci/check_msrv.py
"""
import json
import subprocess
import sys


def version(text):
    parts = [int(part) for part in text.split("-")[0].split(".")]
    return tuple(parts + [0] * (3 - len(parts)))


meta = json.loads(
    subprocess.run(
        ["cargo", "metadata", "--locked", "--format-version", "1"],
        check=True,
        capture_output=True,
        text=True,
    ).stdout
)
ours = next(p for p in meta["packages"] if p["name"] == "radforce")
declared = ours.get("rust_version")
if not declared:
    sys.exit("Cargo.toml declares no rust-version")
too_new = [
    f"{p['name']} {p['version']} needs Rust {p['rust_version']}"
    for p in meta["packages"]
    if p.get("rust_version") and version(p["rust_version"]) > version(declared)
]
if too_new:
    sys.exit(f"rust-version = {declared} is below what locked crates need:\n  " + "\n  ".join(too_new))
rustc = subprocess.run(["rustc", "--version"], check=True, capture_output=True, text=True).stdout
have = rustc.split()[1]
if version(have) < version(declared):
    sys.exit(f"the toolchain ({have}) is older than rust-version = {declared}")
deps = sum(1 for p in meta["packages"] if p.get("rust_version"))
print(f"rust-version {declared}: holds for {deps} locked crates that declare one; toolchain {have}")
