#!/usr/bin/env bash
# Compiles the AssemblyScript kernels into build/wasm/ (git-ignored).
# Each matchers/<name>/assembly/<kernel>.ts becomes build/wasm/<kernel>.wasm.
# The kernels use no runtime allocation: memory is imported from the host
# (which lays out its buffers above the first 64 KiB) and nothing aborts.
set -euo pipefail
cd "$(dirname "$0")/.."
mkdir -p build/wasm
shopt -s nullglob
for src in matchers/*/assembly/*.ts; do
  name="$(basename "$src" .ts)"
  npx --no-install asc "$src" \
    --outFile "build/wasm/${name}.wasm" \
    --enable simd -O3 --noAssert \
    --runtime stub --importMemory --initialMemory 1 \
    --use abort= 
done
