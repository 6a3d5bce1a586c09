# Instruction counts per call by callgrind, shared by the instruction-count scripts
# (benches/instructions.sh, benches/multiphase-instructions.sh, ffi/benches/instructions.sh).
# Source it after setting `bin` (a program whose last argument is a repetition count R) and
# `reps` (R). `per_call ARG...` runs `$bin ARG... R` and `$bin ARG... 2R` and prints the
# difference over R: the instructions of one repetition, with set-up cancelled.
callgrind_tmp=$(mktemp -d)
trap 'rm -rf "$callgrind_tmp"' EXIT
count() { # ARG... REPETITIONS -> total instructions of one run
  valgrind --tool=callgrind --callgrind-out-file="$callgrind_tmp/out" "$bin" "$@" \
    >/dev/null 2>"$callgrind_tmp/log"
  sed -n 's/^summary: //p' "$callgrind_tmp/out"
}
per_call() { # ARG... -> instructions per repetition
  local a b
  a=$(count "$@" "$reps")
  b=$(count "$@" $((2 * reps)))
  echo $(((b - a) / reps))
}
