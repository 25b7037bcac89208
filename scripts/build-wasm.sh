#!/usr/bin/env bash
# Compiles the AssemblyScript kernels into build/wasm/ (git-ignored).
set -euo pipefail
cd "$(dirname "$0")/.."
mkdir -p build/wasm
