"""The layers stay visible: a lower layer never includes a higher one.

Layers, lowest first (DEVELOPERS.md, "Layers"): base, numerics, io, stages,
render, service, cli. A file's layer is its folder under src/ or
include/isohypse/; an include's layer is the folder it names. Also checked:
every library .cpp first includes the header of the same name (a header and
the file that implements it carry the same name), and every public header is
implemented by a .cpp of its name or is header-only.

The checker is run on the tree, then on a copy with a wrong include planted,
where it must fail (so this test can fail).
"""
import os
import re
import shutil
import tempfile

from common import SOURCE, check, finish

LAYERS = ["base", "numerics", "io", "stages", "render", "service", "cli"]
RANK = {name: i for i, name in enumerate(LAYERS)}
INCLUDE = re.compile(r'^\s*#\s*include\s+"([^"]+)"', re.M)


def layer_of_file(rel):
    parts = rel.split("/")
    if parts[0] == "src" and len(parts) > 2:
        return parts[1]
    if parts[:2] == ["include", "isohypse"] and len(parts) > 3:
        return parts[2]
    return None


def layer_of_include(inc):
    parts = inc.split("/")
    if parts[0] == "isohypse" and len(parts) > 2:
        return parts[1]
    if len(parts) > 1 and parts[0] in RANK:
        return parts[0]
    return None


def problems(root):
    """Every rule broken in the tree at root, as sentences."""
    found = []
    headers = {}
    sources = {}
    for top in ("src", "include/isohypse"):
        for dirpath, _, names in os.walk(os.path.join(root, top)):
            for n in names:
                if not n.endswith((".cpp", ".hpp")):
                    continue
                rel = os.path.relpath(os.path.join(dirpath, n), root)
                layer = layer_of_file(rel)
                if layer is None:
                    found.append(f"{rel}: not inside a layer folder ({', '.join(LAYERS)})")
                    continue
                if layer not in RANK:
                    found.append(f"{rel}: unknown layer folder '{layer}'")
                    continue
                text = open(os.path.join(root, rel), encoding="utf-8").read()
                incs = INCLUDE.findall(text)
                for inc in incs:
                    target = layer_of_include(inc)
                    if target is None:
                        if inc.endswith(".inc"):
                            continue  # generated at build time (the embedded page)
                        found.append(f"{rel}: include \"{inc}\" names no layer")
                    elif target not in RANK:
                        found.append(f"{rel}: include \"{inc}\" names an unknown layer")
                    elif RANK[target] > RANK[layer]:
                        found.append(f"{rel} ({layer}) includes \"{inc}\" from the higher layer {target}")
                stem = os.path.splitext(n)[0]
                if n.endswith(".hpp") and rel.startswith("include/"):
                    headers[(layer, stem)] = rel
                if n.endswith(".cpp") and layer != "cli":
                    sources[(layer, stem)] = rel
                    own = [i for i in incs if os.path.splitext(os.path.basename(i))[0] == stem]
                    if not incs or not own or incs[0] != own[0]:
                        found.append(f"{rel}: does not first include a header named {stem}.hpp")
    for (layer, stem), rel in headers.items():
        if (layer, stem) in sources:
            continue
        text = re.sub(r"//[^\n]*", "", open(os.path.join(root, rel), encoding="utf-8").read())
        # header-only: inline or constexpr definitions, templates, or only types
        if not re.search(r"^[A-Za-z][^;{}()\n]*\([^;{}]*\)\s*(const)?\s*;", text, re.M):
            continue
        found.append(f"{rel}: declares functions but no {stem}.cpp implements it in {layer}")
    return found


tree = problems(SOURCE)
for p in tree:
    print("   ", p)
check(not tree, f"the tree keeps the layer rules ({len(tree)} problems)")

# The checker must notice a wrong include: plant one in a copy of the tree.
with tempfile.TemporaryDirectory(prefix="isohypse-layers-") as tmp:
    for top in ("src", "include"):
        shutil.copytree(os.path.join(SOURCE, top), os.path.join(tmp, top))
    victim = os.path.join(tmp, "src", "base", "calendar.cpp")
    with open(victim, "a", encoding="utf-8") as f:
        f.write('\n#include "isohypse/stages/derive.hpp"\n')
    planted = problems(tmp)
    hit = [p for p in planted if "calendar.cpp" in p and "higher layer stages" in p]
    check(len(hit) == 1, f"a planted include of stages/derive.hpp in base/calendar.cpp is reported: {hit}")

finish()
