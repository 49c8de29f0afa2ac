# Shared helpers for the scripts in this folder. Source it; do not run it.
# Every ensure_* function checks before installing, so running it twice costs nothing.

set -euo pipefail

ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
export PATH="$HOME/.cargo/bin:$PATH"
WASM_TARGET=wasm32-unknown-unknown
WASM_PROFILE=wasm-release

say() { printf '\033[1m==> %s\033[0m\n' "$*"; }

# The wasm-bindgen version pinned in Cargo.lock; the CLI must match it exactly.
wasm_bindgen_version() {
    awk '/^name = "wasm-bindgen"$/ { getline; gsub(/version = |"/, ""); print; exit }' "$ROOT/Cargo.lock"
}

ensure_wasm_target() {
    if ! rustup target list --installed | grep -qx "$WASM_TARGET"; then
        say "installing the $WASM_TARGET target"
        rustup target add "$WASM_TARGET"
    fi
}

ensure_wasm_bindgen() {
    local want
    want="$(wasm_bindgen_version)"
    if [ -z "$want" ]; then
        echo "cannot find the wasm-bindgen version in Cargo.lock" >&2
        return 1
    fi
    if command -v wasm-bindgen >/dev/null 2>&1 && [ "$(wasm-bindgen --version | awk '{print $2}')" = "$want" ]; then
        return 0
    fi
    say "installing wasm-bindgen-cli $want (a few minutes, once)"
    # --locked fails on this registry (the CLI's lockfile pins a version it does not serve):
    # try it, then fall back to an unlocked install of the exact same CLI version.
    cargo install wasm-bindgen-cli --version "=$want" --locked \
        || cargo install wasm-bindgen-cli --version "=$want"
}

ensure_npm() {
    # node_modules/.package-lock.json is npm's record of what is installed; when it matches the
    # committed lockfile's packages there is nothing to do.
    if [ -f "$ROOT/node_modules/.package-lock.json" ] \
        && [ "$ROOT/node_modules/.package-lock.json" -nt "$ROOT/package-lock.json" ]; then
        return 0
    fi
    say "installing npm packages from package-lock.json"
    (cd "$ROOT" && npm ci --no-audit --no-fund)
}

# Build the release wasm module and its JS glue into web/pkg.
build_wasm() {
    ensure_wasm_target
    ensure_wasm_bindgen
    ensure_npm
    say "building the release wasm module"
    # `cargo rustc --crate-type cdylib`, not `cargo build`: the crate also declares an rlib, and
    # when rustc emits both crate types it silently skips LTO for the cdylib as well
    # (rust-lang/rust#51009, rust-lang/cargo#9672), which made the module ~10 % larger gzipped.
    (cd "$ROOT" && cargo rustc --profile "$WASM_PROFILE" --target "$WASM_TARGET" -p rungs-wasm \
        --lib --crate-type cdylib)
    local raw="$ROOT/target/$WASM_TARGET/$WASM_PROFILE/rungs_wasm.wasm"
    rm -rf "$ROOT/web/pkg"
    wasm-bindgen --target web --no-typescript --remove-name-section --remove-producers-section \
        --out-dir "$ROOT/web/pkg" "$raw"
    "$ROOT/node_modules/.bin/wasm-opt" -Oz \
        "$ROOT/web/pkg/rungs_wasm_bg.wasm" -o "$ROOT/web/pkg/rungs_wasm_bg.wasm"
}

# Print the size of the release module, raw and gzip-compressed.
report_wasm_size() {
    local f="$ROOT/web/pkg/rungs_wasm_bg.wasm"
    local raw gz
    raw=$(wc -c <"$f")
    gz=$(gzip -9 -c "$f" | wc -c)
    awk -v r="$raw" -v g="$gz" \
        'BEGIN { printf "wasm size: %d bytes raw (%.1f KiB), %d bytes gzip -9 (%.1f KiB)\n", r, r/1024, g, g/1024 }'
}

ensure_rust_components() {
    local have
    have="$(rustup component list --installed 2>/dev/null || true)"
    for c in rustfmt clippy; do
        if ! grep -q "^$c" <<<"$have"; then
            say "installing rustup component $c"
            rustup component add "$c"
        fi
    done
}

# The Python package's build and test tools, pinned, in a virtual environment under target/
# (nothing is installed into the system's Python). Reinstalled only when the pins change.
PY_ENV="$ROOT/target/pyenv"
PY_REQUIREMENTS="maturin==1.16.0 pytest==8.4.2 numpy==2.4.6 pandas==3.1.1"

ensure_python_env() {
    if ! command -v python3 >/dev/null 2>&1; then
        echo "python3 not found: the Python package's tests need CPython 3.11 or later" >&2
        return 1
    fi
    if [ ! -x "$PY_ENV/bin/python" ]; then
        say "creating the Python environment for the package's tests ($PY_ENV)"
        python3 -m venv "$PY_ENV"
    fi
    if [ "$(cat "$PY_ENV/.rungs-requirements" 2>/dev/null)" != "$PY_REQUIREMENTS" ]; then
        say "installing $PY_REQUIREMENTS"
        # shellcheck disable=SC2086 # the pins are separate words
        "$PY_ENV/bin/python" -m pip install --quiet --disable-pip-version-check $PY_REQUIREMENTS
        printf '%s' "$PY_REQUIREMENTS" >"$PY_ENV/.rungs-requirements"
    fi
}

# Build the Python wheel (release, abi3) with maturin and install it into the environment.
build_python_package() {
    ensure_python_env
    say "building the Python package (maturin)"
    rm -f "$ROOT"/target/wheels/rungs-*.whl
    (cd "$ROOT/crates/python" && CARGO_TARGET_DIR="$ROOT/target/python" \
        "$PY_ENV/bin/maturin" build --release --locked --quiet \
        --interpreter "$PY_ENV/bin/python" --out "$ROOT/target/wheels")
    "$PY_ENV/bin/python" -m pip install --quiet --disable-pip-version-check \
        --force-reinstall --no-deps "$ROOT"/target/wheels/rungs-*.whl
}
