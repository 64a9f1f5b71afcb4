#!/usr/bin/env bash
# Checks the library's layering: no cycle among the top-level modules of
# src/ (a module's code naming `crate::other` is an edge), and nothing under
# src/coder/ naming the model layer. Comment lines are not counted.
# Exit status 1, with the offending lines, when a check fails.
set -euo pipefail
cd "$(dirname "$0")/../src"

modules=$(for p in *; do
    case "$p" in lib.rs) ;; *.rs) echo "${p%.rs}" ;; *) [ -d "$p" ] && echo "$p" ;; esac
done)

# The code lines of module $1 (its file or its directory).
code_of() {
    local files
    if [ -d "$1" ]; then files=$(find "$1" -name '*.rs'); else files="$1.rs"; fi
    # shellcheck disable=SC2086
    grep -hv '^\s*//' $files
}

status=0
edges=$(mktemp)
trap 'rm -f "$edges"' EXIT
for a in $modules; do
    for b in $(code_of "$a" | grep -o 'crate::[a-z_0-9]*' | sed 's/crate:://' | sort -u); do
        if [ "$b" != "$a" ] && grep -qx "$b" <<<"$modules"; then
            echo "$a $b" >>"$edges"
        fi
    done
done

while read -r a b; do
    if grep -qx "$b $a" "$edges"; then
        echo "layers: modules $a and $b import each other" >&2
        status=1
    fi
done <"$edges"
if ! tsort "$edges" >/dev/null 2>&1; then
    echo "layers: the module graph has a cycle:" >&2
    tsort "$edges" 2>&1 >/dev/null | sed 's/^/  /' >&2
    status=1
fi
if grep -rn --include='*.rs' 'crate::model\|subrange::model' coder | grep -v ':\s*//[/!]\?\s' | grep -v '^\S*:[0-9]*:\s*//'; then
    echo "layers: src/coder names the model layer (lines above)" >&2
    status=1
fi
[ "$status" = 0 ] && echo "layers: $(wc -l <"$edges") edges between top-level modules, no cycle"
exit "$status"
