#!/usr/bin/env bash
# On-target conformance (issue 5): every golden vector on emulated
# Cortex-M0/M3/M4 and RV32IMC cores under QEMU. Called from .ci/run.
# Fails if any target differs from golden by a single bit, if two runs give
# different instruction counts, or if a tool is missing.
set -euo pipefail
cd "$(dirname "$0")/.."
start=$(date +%s)
if ! command -v qemu-system-arm >/dev/null || ! command -v qemu-system-riscv32 >/dev/null; then
  apt-get update
  apt-get install -y --no-install-recommends qemu-system-arm qemu-system-misc
fi
command -v gcc >/dev/null || apt-get install -y --no-install-recommends gcc libc6-dev
# The C firmware (targets/c-firmware): Arm cross compiler and newlib.
if ! command -v arm-none-eabi-gcc >/dev/null; then
  apt-get update
  apt-get install -y --no-install-recommends gcc-arm-none-eabi libnewlib-arm-none-eabi
fi
rustup target add thumbv6m-none-eabi thumbv7m-none-eabi thumbv7em-none-eabihf riscv32imc-unknown-none-elf
rustup component add llvm-tools
# Code bytes come from the reference graph of each image that runs the
# vectors (the default `--code-bytes graph`), so the step no longer builds
# the code-size images of `--code-bytes rebuild`; build two of them here
# (Cortex-M0: the image dispatching none and one kernel's) so that path keeps
# compiling. Before the run, which then rebuilds the full M0 image the
# soft-float check of .ci/run reads.
for only in none filter.separable; do
  (cd targets/cortex-m && FIXSIGHT_ONLY_KERNELS=$only timeout 900 cargo build -q --release --target thumbv6m-none-eabi)
done
timeout 2400 cargo run -q --release -p fixsight-verify -- targets --overwrite --out "${FIXSIGHT_REPORT:-fixsight-report}"
# A user's firmware on a 64 KiB part: flash, code and RAM at opt-level 3 and "s".
timeout 1200 cargo run -q --release -p fixsight-verify -- flash --overwrite --out "${FIXSIGHT_REPORT:-fixsight-report}"
echo "targets step took $(( $(date +%s) - start )) s"
