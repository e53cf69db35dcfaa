#!/bin/sh
# Fills fuzz/corpus/<target>/ with seeds: every netlist and configuration under testdata/ and
# the committed seeds under fuzz/seeds/. Run from anywhere; the corpus folders are not committed.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
top=$(dirname "$here")
corpus="$here/corpus"
mkdir -p "$corpus/netlist_parse" "$corpus/value_expr" "$corpus/config_parse" "$corpus/check_pipeline"

copy_all() { # copy_all TARGET FIND-ARGS...
    target=$1
    shift
    find "$top/testdata" -type f "$@" | while read -r file; do
        name=$(printf '%s' "${file#"$top"/}" | tr '/' '_')
        cp "$file" "$corpus/$target/$name"
    done
}

netlists="( -name *.cir -o -name *.sp -o -name *.spice -o -name *.net -o -name *.ckt -o -name *.lib -o -name *.inc )"
# shellcheck disable=SC2086
copy_all netlist_parse $netlists
# shellcheck disable=SC2086
copy_all check_pipeline $netlists
copy_all config_parse -name '*.toml'
cp "$top/src/config/starter.toml" "$corpus/config_parse/starter.toml"
cp "$here"/seeds/value_expr/* "$corpus/value_expr/"
# Every `.param` right-hand side and braced value in the netlists is a value seed too.
find "$top/testdata" -type f -name '*.cir' -exec grep -ohE '\{[^}]{1,200}\}' {} + 2>/dev/null \
    | sort -u | head -n 400 | awk -v dir="$corpus/value_expr" '{ f = sprintf("%s/from-testdata-%04d", dir, NR); printf "%s", $0 > f; close(f) }'
for target in netlist_parse value_expr config_parse check_pipeline; do
    printf '%s: %s seeds\n' "$target" "$(find "$corpus/$target" -type f | wc -l)"
done
