#!/bin/sh
# Installs what keel's build, tests, demo and bench need from Debian's packages, only what is missing.
# Usage: cmake/install-deps.sh [extra-package ...]
set -eu
pkgs="cmake ninja-build g++ clang libeigen3-dev doctest-dev libbenchmark-dev python3-scipy python3-numpy gnuplot-nox gcovr clang-tidy cppcheck libclang-rt-dev gcc-arm-none-eabi libnewlib-arm-none-eabi libstdc++-arm-none-eabi-newlib qemu-system-arm $*"
missing=""
for p in $pkgs; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing="$missing $p"
done
[ -z "$missing" ] && exit 0
echo "installing:$missing"
sudo=""
[ "$(id -u)" -eq 0 ] || sudo="sudo"
$sudo apt-get update -qq
DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq --no-install-recommends $missing >/dev/null
