#!/usr/bin/env bash
# Static libraries of the C ABI for the host and four cores, with sizes.
#
#   bash c-abi/build-libs.sh            # all five
#   bash c-abi/build-libs.sh thumbv7em-none-eabihf ...
#
# Output: target/<triple>/c-release/libfixsight_c.a (profile `c-release` of
# the workspace Cargo.toml: opt-level 3, fat LTO, one codegen unit,
# panic = abort, no debug info). Link it with include/fixsight.h; on the
# host add -lpthread -ldl -lm.
#
# For each bare-metal core the script prints the archive size and the bytes
# the library adds to a firmware image (.text + .rodata + .data of an image
# linked by rust-lld with --gc-sections from the archive alone, keeping
# every fxs_ function of a family with -u; an image without the library
# is empty): "all" keeps every function, the family columns keep one
# family (plus fxs_status_message). memcpy/memset come from the library's
# own compiler_builtins here; a C firmware that already has them saves
# those bytes.
set -euo pipefail
cd "$(dirname "$0")/.."
host=$(rustc -vV | sed -n 's/^host: //p')
bin="$(rustc --print sysroot)/lib/rustlib/$host/bin"
lld="$bin/rust-lld"
size="$bin/llvm-size"
for tool in "$lld" "$size"; do
  test -x "$tool" || { echo "$tool missing: rustup component add llvm-tools"; exit 1; }
done
if [ $# -gt 0 ]; then triples=("$@"); else
  triples=("$host" thumbv6m-none-eabi thumbv7m-none-eabi thumbv7em-none-eabihf riscv32imc-unknown-none-elf)
fi
families=(filter gradient nms hysteresis thinning warp lines marking tracker edge_stream point_job)
functions=$(grep -o 'fxs_[a-z0-9_]*(' c-abi/include/fixsight.h | tr -d '(' | sort -u)
work=target/c-abi-sizes
mkdir -p "$work"

bytes() { # alloc sections of an ELF: .text .rodata .data
  "$size" -A "$1" | awk '$1 ~ /^\.(text|rodata|data)/ { s += $2 } END { print s + 0 }'
}
image() { # triple, archive, output, functions...
  local t=$1 a=$2 out=$3; shift 3
  local keep=()
  for f in "$@"; do keep+=(-u "$f"); done
  "$lld" -flavor gnu --gc-sections -e fxs_status_message "${keep[@]}" "$a" -o "$out"
  bytes "$out"
}

printf '%-30s %10s %8s' triple archive all
for f in "${families[@]}"; do printf ' %10s' "$f"; done
printf '\n'
for t in "${triples[@]}"; do
  cargo build --quiet -p fixsight-c --profile c-release --target "$t"
  a="target/$t/c-release/libfixsight_c.a"
  printf '%-30s %10s' "$t" "$(stat -c %s "$a")"
  if [ "$t" = "$host" ]; then printf ' %8s\n' "-"; continue; fi
  # shellcheck disable=SC2086
  printf ' %8s' "$(image "$t" "$a" "$work/$t.all.elf" $functions)"
  for fam in "${families[@]}"; do
    # shellcheck disable=SC2086
    printf ' %10s' "$(image "$t" "$a" "$work/$t.$fam.elf" fxs_status_message $(echo "$functions" | grep "^fxs_${fam}_"))"
  done
  printf '\n'
done
