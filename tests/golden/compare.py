"""Compare fresh screening answers with the golden corpus (tests/golden/*.json.gz).

    python tests/golden/compare.py               # plain listing; exit 0 when nothing differs, 1 otherwise
    python tests/golden/compare.py --report      # the same as a markdown report
    python tests/golden/compare.py --regenerate  # capture the corpus again from the code as it is now
    python tests/golden/compare.py --only NAME…  # some entries only (names as in the corpus)
    python tests/golden/compare.py --no-batch    # the single cases only

Per entry it lists: a verdict that changed, reasons and warnings that changed (as lists of sentences),
keys added or removed, numbers that moved by more than a relative 1e-9 (2e-9 under `limits`), any other
value that changed (text, true/false, null, list length), and an input error that appeared, vanished or
changed its message. The batch outputs are compared row by row (JSON) and cell by cell (CSV).

Ignored, as metadata that says nothing of the answer:
* `tool_version` (the package version, which changes with every release).
Nothing else: the batches run in a scratch directory with relative paths, so sources and messages name
the same files on any machine.
"""

from __future__ import annotations

import argparse
import csv
import io
import math
import re
import sys
from dataclasses import dataclass
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

import make_golden as mg  # noqa: E402

#: Keys never compared (see the module docstring).
IGNORED_KEYS = frozenset({"tool_version"})
RTOL = 1e-9
RTOL_LIMITS = 2e-9


@dataclass(frozen=True)
class Difference:
    entry: str       # case or batch output
    kind: str        # verdict | reasons | warnings | key added | key removed | number moved | value changed | error
    path: str
    old: object = None
    new: object = None
    rel: float | None = None   # relative move of a number

    def line(self) -> str:
        if self.kind == "number moved":
            return f"{self.path}: {self.old!r} -> {self.new!r} (relative {self.rel:.3g})"
        if self.kind in ("key added",):
            return f"{self.path}: added ({_short(self.new)})"
        if self.kind in ("key removed",):
            return f"{self.path}: removed (was {_short(self.old)})"
        return f"{self.path}: {_short(self.old)} -> {_short(self.new)}"


def _short(x: object, n: int = 160) -> str:
    s = repr(x)
    return s if len(s) <= n else s[: n - 3] + "..."


def _is_number(x: object) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool)


def rel_move(a: float, b: float) -> float:
    if a == b:
        return 0.0
    scale = max(abs(a), abs(b))
    return abs(a - b) / scale if scale > 0 and math.isfinite(scale) else math.inf


def diff_values(old: object, new: object, entry: str, path: str = "", ignored=IGNORED_KEYS,
                out: list[Difference] | None = None) -> list[Difference]:
    """Every difference between two JSON values (see the module docstring)."""
    out = [] if out is None else out
    key = path.rsplit(".", 1)[-1]
    if key in ("reasons", "warnings") and isinstance(old, list) and isinstance(new, list):
        if old != new:
            out.append(Difference(entry, key, path, old, new))
        return out
    if key == "verdict" and old != new:
        out.append(Difference(entry, "verdict", path, old, new))
        return out
    if isinstance(old, dict) and isinstance(new, dict):
        for k in old:
            if k in ignored:
                continue
            p = f"{path}.{k}" if path else k
            if k not in new:
                out.append(Difference(entry, "key removed", p, old[k], None))
            else:
                diff_values(old[k], new[k], entry, p, ignored, out)
        for k in new:
            if k not in old and k not in ignored:
                out.append(Difference(entry, "key added", f"{path}.{k}" if path else k, None, new[k]))
        return out
    if isinstance(old, list) and isinstance(new, list):
        if len(old) != len(new):
            out.append(Difference(entry, "value changed", f"{path} (length)", len(old), len(new)))
            return out
        for i, (a, b) in enumerate(zip(old, new)):
            diff_values(a, b, entry, f"{path}[{i}]", ignored, out)
        return out
    if _is_number(old) and _is_number(new):
        tol = RTOL_LIMITS if (path.startswith("limits.") or ".limits." in path) else RTOL
        r = rel_move(float(old), float(new))
        if r > tol:
            out.append(Difference(entry, "number moved", path, old, new, r))
        return out
    if old != new or type(old) is not type(new):
        out.append(Difference(entry, "value changed", path, old, new))
    return out


def diff_entry(old: dict, new: dict, ignored=IGNORED_KEYS) -> list[Difference]:
    name = old["name"]
    if "error" in old or "error" in new:
        if old.get("error") != new.get("error"):
            return [Difference(name, "error", "(input error)", old.get("error"), new.get("error"))]
        return []
    return diff_values(old["result"], new["result"], name, "", ignored)


def diff_csv(old: str, new: str, entry: str) -> list[Difference]:
    out: list[Difference] = []
    a, b = list(csv.reader(io.StringIO(old))), list(csv.reader(io.StringIO(new)))
    if a[:1] != b[:1]:
        out.append(Difference(entry, "value changed", "header", a[:1], b[:1]))
        return out
    header = a[0] if a else []
    if len(a) != len(b):
        out.append(Difference(entry, "value changed", "(rows)", len(a) - 1, len(b) - 1))
    for ra, rb in zip(a[1:], b[1:]):
        rid = ra[1] if len(ra) > 1 else ra[:1]
        for j, (x, y) in enumerate(zip(ra, rb)):
            if x != y:
                col = header[j] if j < len(header) else str(j)
                kind = "verdict" if col == "verdict" else ("reasons" if col == "reasons" else
                                                            "warnings" if col == "warnings" else "value changed")
                out.append(Difference(entry, kind, f"row {ra[0]} ({rid}), column '{col}'", x, y))
        if len(ra) != len(rb):
            out.append(Difference(entry, "value changed", f"row {ra[0]} (cells)", len(ra), len(rb)))
    return out


def diff_batch(old: dict, new: dict) -> list[Difference]:
    out: list[Difference] = []
    for name in ("cases/inventory.csv", "generated_inventory.csv"):
        o, n = old[name], new[name]
        if o["exit_code"] != n["exit_code"]:
            out.append(Difference(f"batch {name}", "value changed", "exit code", o["exit_code"], n["exit_code"]))
        diff_values(o["json"], n["json"], f"batch {name} --json", "", IGNORED_KEYS, out)
        out.extend(diff_csv(o["csv"], n["csv"], f"batch {name} --csv"))
    return out


# --------------------------------------------------------------------------------------------------

def compare(only: set[str] | None = None, batch: bool = True) -> tuple[list[Difference], int]:
    """(differences, number of entries compared) of fresh answers against the stored corpus."""
    stored = mg.load(mg.CASES_FILE)["entries"]
    by_name = {e["name"]: e for e in stored}
    if only is not None:
        unknown = only - set(by_name)
        if unknown:
            raise SystemExit(f"not in the corpus: {', '.join(sorted(unknown))}")
    fresh = mg.run_case_corpus(names=only, stored=stored)
    diffs: list[Difference] = []
    seen = set()
    for e in fresh:
        seen.add(e["name"])
        if e["name"] not in by_name:
            diffs.append(Difference(e["name"], "key added", "(entry)", None, "new entry"))
            continue
        diffs.extend(diff_entry(by_name[e["name"]], e))
    for name in by_name:
        if (only is None or name in only) and name not in seen:
            diffs.append(Difference(name, "key removed", "(entry)", "entry", None))
    n = len(fresh)
    if batch:
        old = mg.load(mg.BATCH_FILE)
        diffs.extend(diff_batch(old, mg.run_batch_corpus(stored=old)))
        n += 2
    return diffs, n


def _pattern(path: str) -> str:
    return re.sub(r"\[\d+\]", "[]", path)


def _grouped(diffs: list[Difference]) -> dict[str, list[Difference]]:
    g: dict[str, list[Difference]] = {}
    for d in diffs:
        g.setdefault(d.entry, []).append(d)
    return g


def plain(diffs: list[Difference], n: int, limit: int = 40) -> str:
    if not diffs:
        return f"golden corpus: {n} entries compared, no differences"
    lines = [f"golden corpus: {n} entries compared, {len(_grouped(diffs))} differ ({len(diffs)} differences)"]
    for entry, ds in _grouped(diffs).items():
        lines.append(f"{entry}:")
        for d in ds[:limit]:
            lines.append(f"  {d.kind}: {d.line()}")
        if len(ds) > limit:
            lines.append(f"  ... and {len(ds) - limit} more")
    return "\n".join(lines)


def markdown(diffs: list[Difference], n: int, limit: int = 40) -> str:
    g = _grouped(diffs)
    lines = ["# Golden corpus comparison", "",
             f"{n} entries compared (single cases and 2 batch outputs); {len(g)} differ, "
             f"{len(diffs)} differences in all.", ""]
    if not diffs:
        return "\n".join(lines + ["No differences."])
    kinds: dict[str, int] = {}
    for d in diffs:
        kinds[d.kind] = kinds.get(d.kind, 0) + 1
    lines += ["| kind | count |", "| --- | ---: |"] + [f"| {k} | {v} |" for k, v in sorted(kinds.items())] + [""]
    moved: dict[str, list[float]] = {}
    for d in diffs:
        if d.kind == "number moved":
            moved.setdefault(_pattern(d.path), []).append(d.rel)
    if moved:
        lines += ["## Numbers moved, by key", "", "| key | entries | largest relative move |",
                  "| --- | ---: | ---: |"]
        for k, rels in sorted(moved.items(), key=lambda kv: -max(kv[1])):
            lines.append(f"| `{k}` | {len(rels)} | {max(rels):.3g} |")
        lines.append("")
    others = [d for d in diffs if d.kind != "number moved"]
    if others:
        lines += ["## Verdicts, reasons, warnings, keys and other values", ""]
        for entry, ds in _grouped(others).items():
            lines.append(f"### {entry}")
            for d in ds[:limit]:
                lines.append(f"- **{d.kind}** `{d.path}`: {_short(d.old)} → {_short(d.new)}")
            if len(ds) > limit:
                lines.append(f"- … and {len(ds) - limit} more")
            lines.append("")
    lines += ["## Numbers moved, by entry", ""]
    for entry, ds in _grouped([d for d in diffs if d.kind == "number moved"]).items():
        lines.append(f"- {entry}: " + "; ".join(f"`{d.path}` {d.rel:.2g}" for d in ds[:8])
                     + (f"; … {len(ds) - 8} more" if len(ds) > 8 else ""))
    return "\n".join(lines)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--report", action="store_true", help="print a markdown report")
    ap.add_argument("--regenerate", action="store_true", help="capture the corpus again from the current code")
    ap.add_argument("--only", nargs="+", metavar="NAME", help="compare these entries only")
    ap.add_argument("--no-batch", action="store_true", help="leave out the batch outputs")
    args = ap.parse_args(argv)
    if args.regenerate:
        mg.main()
        return 0
    diffs, n = compare(set(args.only) if args.only else None, batch=not args.no_batch and not args.only)
    print(markdown(diffs, n) if args.report else plain(diffs, n))
    return 1 if diffs else 0


if __name__ == "__main__":
    raise SystemExit(main())
