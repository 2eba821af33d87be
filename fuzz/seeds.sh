#!/usr/bin/env bash
# Usage: bash fuzz/seeds.sh TARGET DIR
# Fills DIR with the seed inputs of fuzz target TARGET: the committed seeds in
# fuzz/seeds/TARGET (argument expressions, small goldens) and the project's own
# files of that kind, copied from where they live so the seeds never go stale
# and libFuzzer never writes beside them: every WGSL file of the demo library,
# its planted copy and the GPU corpus for `wgsl`; the demo and planted suites
# for `suite`.
set -euo pipefail
target="$1"
dir="$2"
root="$(cd "$(dirname "$0")/.." && pwd)"
mkdir -p "$dir"
if [ -d "$root/fuzz/seeds/$target" ]; then
    cp "$root/fuzz/seeds/$target"/* "$dir"/
fi
case "$target" in
    wgsl)
        for f in "$root"/shaders/*/*.wgsl "$root"/tests/gpu/corpus_wgsl/*.wgsl; do
            rel="${f#"$root"/}"
            cp "$f" "$dir/${rel//\//-}"
        done
        ;;
    suite)
        cp "$root/shadegate.toml" "$dir/demo.toml"
        cp "$root/shaders/brackenfold-planted/shadegate.toml" "$dir/planted.toml"
        ;;
esac
