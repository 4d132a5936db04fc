"""Arm-file figures: loading the slowest files that fit in 1 MiB, writing an edited arm, recovery copies.

Every file here is made in a temporary folder; the worst cases are the shapes that cost a TOML reader most
per byte (many short keys, long arrays, deep tables, many comments).
"""

from __future__ import annotations

import string
import tempfile
import time
from pathlib import Path

import _timing

from poser import armfile
from poser.io.recovery import RecoveryWriter

ROOT = Path(__file__).resolve().parent.parent
MIB = armfile.MAX_BYTES




def _names():
    alphabet = string.ascii_letters + string.digits
    i = 0
    while True:
        k, s = i, ""
        while True:
            s += alphabet[k % 62]
            k //= 62
            if not k:
                break
        yield s
        i += 1


def _fill(head: str, line_of, limit=MIB) -> str:
    out, size = [head], len(head.encode())
    for i, name in enumerate(_names()):
        row = line_of(i, name)
        if size + len(row.encode()) > limit:
            return "".join(out)
        out.append(row)
        size += len(row.encode())


def _load_time(folder: Path, name: str, text: str, repeat: int) -> float:
    path = folder / name
    path.write_text(text)

    def go():
        try:
            armfile.load(path)
        except armfile.ArmFileError:
            pass

    return _timing.best(go, repeat)


def run(quick=False):
    repeat = 2 if quick else 5
    heron_text = (ROOT / "demo_arms" / "heron6.toml").read_text()
    figures, goals = {}, {}
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        cases = {
            "1 MiB, 175k notes keys (refused)": _fill(heron_text, lambda i, k: f"{k}=1\n"),
            "1 MiB of comments (refused)": _fill(heron_text, lambda i, k: "#\n"),
            "1 MiB of blank lines": _fill(heron_text, lambda i, k: "\n"),
            "1 MiB, one long string": heron_text + '[notes]\ns = "' + "x" * (MIB - len(heron_text) - 40) + '"\n',
            "20k notes values (largest accepted)": heron_text.replace('payload_kg = 8\n', "payload_kg = 8\nv = [")
            + ",".join("1" for _ in range(armfile.MAX_ITEMS - 200)) + "]\n",
            "5000 notes keys with comments": _fill(heron_text, lambda i, k: f"k{k} = {i}  # note\n",
                                                   limit=len(heron_text) + 5000 * 20),
            "heron6.toml": heron_text,
        }
        for label, text in cases.items():
            figures[f"load: {label} (ms)"] = 1e3 * _load_time(folder, "case.toml", text, repeat)
        goals["load: 1 MiB, 175k notes keys (refused) (ms)"] = "well under 1000 ms (tomlkit took 7000 ms)"
        goals["load: 1 MiB of blank lines (ms)"] = "well under 1000 ms (tomlkit took 103000 ms)"

        big = armfile.loads(cases["5000 notes keys with comments"], "big.toml")
        big.joints[2].max = 150
        big.joints.insert(1, big.joints.pop(3))
        figures["dumps: edited heron6 (ms)"] = 1e3 * _timing.best(lambda: armfile.dumps(_edited(heron_text)), repeat)
        figures["dumps: edited arm with 5000 commented notes (ms)"] = 1e3 * _timing.best(
            lambda: armfile.dumps(big), repeat)
        blank = armfile.loads(cases["1 MiB of blank lines"], "blank.toml")
        blank.joints[0].max = 100
        figures["dumps: edited arm with 1 MiB of blank lines (ms)"] = 1e3 * _timing.best(lambda: armfile.dumps(blank),
                                                                                 repeat)
        spec = armfile.loads(heron_text, "heron6.toml")
        path = folder / "heron6.toml"
        path.write_text(heron_text)
        figures["save: heron6, atomic, fsync (ms)"] = 1e3 * _timing.best(lambda: armfile.save(spec, path, expect=None),
                                                                   repeat)
        w = RecoveryWriter(folder / "rec.toml", min_interval=0.5)
        n = 200
        t = time.perf_counter()
        for _ in range(n):
            w.submit(big)
        figures["recovery: submit, 5000-note arm (µs per edit)"] = 1e6 * (time.perf_counter() - t) / n
        goals["recovery: submit, 5000-note arm (µs per edit)"] = "the GUI thread pays a copy, not a save"
        w.close()
    return figures, goals


def _edited(text):
    spec = armfile.loads(text, "heron6.toml")
    spec.joints[1].max = 141
    spec.joints.insert(0, spec.joints.pop(2))
    return spec
