#!/usr/bin/env bash
# Times one model's figure set at 10³, 10⁵ and 10⁷ rows (or the row counts
# given) and prints each file's size; the SVGs land in build/figures-bench/<rows>/.
# Run by hand from the repository root after `make`:  bench/figures.sh [ROWS...]
set -eu
cd "$(dirname "$0")/.."
make -s build/fitproof
objects=$(ls build/obj/src/*/*.o build/obj/build/gen/*.o | grep -v '/cli/')
libs="$(pkg-config --libs gsl yaml-0.1 jansson libcmark libcrypto sqlite3 libpq libzip libxml-2.0) -lgmp -pthread"
cc -std=c17 -O2 -Wall -Wextra -Werror -o build/figures_bench bench/figures_bench.c \
    $objects $libs -lm
build/figures_bench "$@"
