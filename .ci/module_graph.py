#!/usr/bin/env python3
"""Module graph of the workspace's crates, and a check that it has no import circle.

Every reference to another module of the same crate (`use crate::a::b`, `crate::a::b::f(..)`,
`super::x`, and names re-exported by a parent module) is an edge between the two sibling
modules that hold the two ends below their closest common parent. A parent's ownership of its
children is no edge, nor are references from a child to its parent's own items; code under
`#[cfg(test)]` is left out, and so are whole modules declared under it. Between crates, the edges are the `[dependencies]` of each
package's Cargo.toml.

    python3 .ci/module_graph.py                # check every crate; exit 1 on a circle
    python3 .ci/module_graph.py --show solver  # also print that crate's graph (Markdown)

Exit status: 0 without a circle, 1 with one (each circle printed), 2 on a usage error.
"""

import argparse
import re
import sys
from pathlib import Path

try:
    import tomllib
except ImportError:  # Python < 3.11
    tomllib = None

ROOT = Path(__file__).resolve().parent.parent
CRATES = {
    "solver": "solver/src",
    "sky": "sky/src",
    "tsplib": "bench-harness/tsplib/src",
    "charts": "bench-harness/charts/src",
    "harness": "bench-harness/src",
    "python": "python/src",
}

PATH_RE = re.compile(r"\b(crate|super|self)((?:::[A-Za-z_][A-Za-z0-9_]*)+)")
USE_RE = re.compile(r"\b(?:pub(?:\([a-z]+\))?\s+)?use\s+([^;]+);", re.S)


def strip_comments(text):
    text = re.sub(r"/\*.*?\*/", "", text, flags=re.S)
    return "\n".join(line.split("//", 1)[0] for line in text.splitlines())


def strip_tests(text):
    """Drops items under `#[cfg(test)]`: the attribute's next item (a braced block or a line)."""
    out = []
    i = 0
    marker = "#[cfg(test)]"
    while True:
        j = text.find(marker, i)
        if j < 0:
            out.append(text[i:])
            break
        out.append(text[i:j])
        k = j + len(marker)
        # the item ends at the first `;` before any `{`, or at its matching `}`
        semi = text.find(";", k)
        brace = text.find("{", k)
        if brace < 0 or (0 <= semi < brace):
            i = semi + 1 if semi >= 0 else len(text)
            continue
        depth = 0
        m = brace
        while m < len(text):
            if text[m] == "{":
                depth += 1
            elif text[m] == "}":
                depth -= 1
                if depth == 0:
                    break
            m += 1
        i = m + 1
    return "".join(out)


def modules_of(src):
    """Module path (tuple) -> file, for a crate whose root is lib.rs or main.rs."""
    mods = {}
    for f in src.rglob("*.rs"):
        rel = f.relative_to(src).with_suffix("")
        parts = list(rel.parts)
        if parts[-1] in ("lib", "main") and len(parts) == 1:
            parts = []
        elif parts[-1] == "mod":
            parts = parts[:-1]
        mods[tuple(parts)] = f
    return mods


def expand_use(tree):
    """`a::{b, c::{d, e}}` -> ['a::b', 'a::c::d', 'a::c::e'] (renames and globs kept as paths)."""
    tree = re.sub(r"\s+", "", tree)
    i = tree.find("{")
    if i < 0:
        return [tree.split("as")[0] if "::" in tree else tree]
    prefix, inner = tree[:i], tree[i + 1 : tree.rfind("}")]
    parts, depth, cur = [], 0, ""
    for ch in inner:
        if ch == "," and depth == 0:
            parts.append(cur)
            cur = ""
            continue
        depth += ch == "{"
        depth -= ch == "}"
        cur += ch
    if cur:
        parts.append(cur)
    out = []
    for p in parts:
        for q in expand_use(p):
            out.append(prefix + q if q != "self" else prefix.rstrip(":"))
    return out


def absolute(mod, head, rest):
    """A path written in module `mod` as an absolute list of segments."""
    segs = [s for s in rest.split("::") if s]
    if head == "crate":
        return segs
    base = list(mod)
    if head == "self":
        return base + segs
    # super (possibly repeated: super::super::x)
    base = base[:-1]
    while segs and segs[0] == "super":
        base = base[:-1]
        segs = segs[1:]
    return base + segs


def reexports(mods, texts):
    """Module -> {name: absolute path} of its `pub use` lines."""
    table = {}
    for mod, text in texts.items():
        names = {}
        for m in re.finditer(r"\bpub(?:\([a-z]+\))?\s+use\s+([^;]+);", text):
            for path in expand_use(m.group(1)):
                path = re.sub(r"as[A-Za-z_0-9]+$", "", path)
                head, _, rest = path.partition("::")
                if head in ("crate", "super", "self"):
                    segs = absolute(mod, head, rest)
                else:
                    segs = list(mod) + path.split("::")
                if segs and segs[-1] != "*":
                    names[segs[-1]] = segs
        table[mod] = names
    return table


def resolve(segs, mods, table, depth=0):
    """The module that defines what `segs` names: the longest module prefix, followed through
    re-exports of that module's items."""
    k = len(segs)
    while k > 0 and tuple(segs[:k]) not in mods:
        k -= 1
    mod = tuple(segs[:k])
    if k < len(segs) and depth < 8:
        target = table.get(mod, {}).get(segs[k])
        if target and target != segs[: k + 1]:
            return resolve(target + segs[k + 1 :], mods, table, depth + 1)
    return mod


def test_only(mods):
    """Modules declared under `#[cfg(test)]` (`#[cfg(test)] mod testing;`), with their children:
    all of their code is test code."""
    decl = re.compile(r"#\[cfg\(test\)\]\s*(?:pub(?:\([a-z]+\))?\s+)?mod\s+([A-Za-z_][A-Za-z0-9_]*)\s*;")
    roots = set()
    for mod, f in mods.items():
        for m in decl.finditer(strip_comments(f.read_text())):
            roots.add(mod + (m.group(1),))
    return {m for m in mods if any(m[: len(r)] == r for r in roots)}


def crate_edges(src):
    mods = modules_of(src)
    for m in test_only(mods):
        del mods[m]
    texts = {m: strip_tests(strip_comments(f.read_text())) for m, f in mods.items()}
    table = reexports(mods, texts)
    edges = {}
    for mod, text in texts.items():
        paths = []
        for m in USE_RE.finditer(text):
            for p in expand_use(m.group(1)):
                head, _, rest = p.partition("::")
                if head in ("crate", "super", "self"):
                    paths.append((head, "::" + rest))
        body = USE_RE.sub("", text)
        paths += [(m.group(1), m.group(2)) for m in PATH_RE.finditer(body)]
        for head, rest in paths:
            target = resolve(absolute(mod, head, rest), mods, table)
            n = 0
            while n < min(len(mod), len(target)) and mod[n] == target[n]:
                n += 1
            if n == len(mod) or n == len(target):
                continue  # into its own child, or to an ancestor's own items
            parent = mod[:n]
            a, b = mod[n], target[n]
            where = f"{mods[mod].relative_to(ROOT)}"
            edges.setdefault(parent, {}).setdefault((a, b), where)
    return mods, edges


def cycles(nodes_edges):
    """Circles of a directed graph (one per strongly connected component of two or more)."""
    graph = {}
    for a, b in nodes_edges:
        graph.setdefault(a, set()).add(b)
        graph.setdefault(b, set())
    index, low, stack, on, out = {}, {}, [], set(), []
    counter = [0]

    def visit(v):
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on.add(v)
        for w in sorted(graph[v]):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                out.append(sorted(comp))

    sys.setrecursionlimit(10000)
    for v in sorted(graph):
        if v not in index:
            visit(v)
    return out


def package_edges():
    edges = []
    if tomllib is None:
        return edges
    names = {}
    for toml in [ROOT / "Cargo.toml"] + list(ROOT.glob("*/Cargo.toml")) + list(ROOT.glob("*/*/Cargo.toml")):
        if "fuzz" in toml.parts or "target" in toml.parts:
            continue
        data = tomllib.loads(toml.read_text())
        if "package" in data:
            names[data["package"]["name"]] = data.get("dependencies", {})
    for name, deps in names.items():
        for dep in deps:
            if dep in names:
                edges.append((name, dep))
    return edges


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--show", metavar="CRATE", choices=sorted(CRATES), help="print this crate's module graph")
    args = ap.parse_args()
    bad = False
    for crate, src in CRATES.items():
        path = ROOT / src
        if not path.is_dir():
            continue
        mods, edges = crate_edges(path)
        for parent, pairs in sorted(edges.items()):
            for circle in cycles(pairs):
                bad = True
                where = "::".join(parent) or "the crate root"
                print(f"circle in {crate} below {where}: {' <-> '.join(circle)}")
                for (a, b), at in sorted(pairs.items()):
                    if a in circle and b in circle:
                        print(f"    {a} -> {b}   ({at})")
        if args.show == crate:
            print(f"## {crate}: uses between sibling modules\n")
            for parent, pairs in sorted(edges.items()):
                print(f"- under `{'::'.join(parent) or 'crate'}`:")
                by = {}
                for a, b in sorted(pairs):
                    by.setdefault(a, []).append(b)
                for a, bs in sorted(by.items()):
                    print(f"    - `{a}` → {', '.join(f'`{b}`' for b in bs)}")
    for circle in cycles(package_edges()):
        bad = True
        print(f"circle between crates: {' <-> '.join(circle)}")
    if bad:
        return 1
    print("no import circle among the modules of " + ", ".join(CRATES) + " nor between the crates")
    return 0


if __name__ == "__main__":
    sys.exit(main())
