"""Re-run the README's example commands and paste their real output back in.

Every ```console block whose lines start with ``$ `` is run, command by command, with
bash in a scratch folder that links the project's ``surveys/`` and ``configs/``; the
block is replaced by the commands and what they printed (stdout and stderr, as a
terminal shows them).  Blocks that need a running service (``dask scheduler``) are
left as they are.  Run from the project root after changing anything the examples show:

    python docs/refresh_readme.py            # rewrite README.md in place
    python docs/refresh_readme.py --check    # exit 1 if any example output is stale
"""

from __future__ import annotations

import argparse
import os
import re
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
BLOCK = re.compile(r"```console\n(.*?)```", re.S)
SKIP_MARKERS = ("dask scheduler", "dask worker")


def run_block(body: str, workdir: Path) -> str:
    commands = [ln[2:] for ln in body.splitlines() if ln.startswith("$ ")]
    out = []
    env = dict(os.environ, COLUMNS="100", PYTHONWARNINGS="ignore")
    bindir = str(Path(sys.executable).parent)
    env["PATH"] = bindir + os.pathsep + env.get("PATH", "")
    for cmd in commands:
        p = subprocess.run(["bash", "-c", cmd], cwd=workdir, stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
                           text=True, env=env, timeout=600)
        out.append(f"$ {cmd}")
        text = p.stdout.rstrip("\n").replace(str(workdir.resolve()), ".").replace(str(workdir), ".")
        if text:
            out.append(text)
    return "\n".join(out) + "\n"


def refresh_images(work: Path, images: Path) -> None:
    """Copy the example map and screenshot the demo report's first screen (headless Chromium)."""
    import shutil

    # one depth map per scenario; the README shows the example's wet season, the harder one for the antennas
    m = work / "maps-example" / "map_antennas__wet.png"
    if m.exists():
        shutil.copyfile(m, images / "map_antennas_example.png")
    report = work / "subsurf-demo" / "report.html"
    chromium = shutil.which("chromium")
    if report.exists() and chromium:
        with tempfile.TemporaryDirectory() as profile:
            subprocess.run([chromium, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
                            "--no-first-run", "--disable-background-networking", "--disable-component-update",
                            "--disable-sync", f"--user-data-dir={profile}", "--hide-scrollbars",
                            "--window-size=1280,860", f"--screenshot={images / 'report-first-screen.png'}",
                            report.resolve().as_uri()], capture_output=True, timeout=120)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--check", action="store_true", help="report stale blocks, change nothing")
    args = ap.parse_args()
    readme = ROOT / "README.md"
    text = readme.read_text(encoding="utf-8")
    stale = 0
    with tempfile.TemporaryDirectory(prefix="subsurf-readme-") as tmp:
        work = Path(tmp)
        images = ROOT / "docs" / "images"
        for name in ("surveys", "configs"):
            (work / name).symlink_to(ROOT / name)

        def replace(m: re.Match) -> str:
            nonlocal stale
            body = m.group(1)
            if not any(ln.startswith("$ ") for ln in body.splitlines()) or any(s in body for s in SKIP_MARKERS):
                return m.group(0)
            new = run_block(body, work)
            if new != body:
                stale += 1
                if args.check:  # say which example and how it differs
                    import difflib

                    first = next(ln for ln in body.splitlines() if ln.startswith("$ "))
                    diff = difflib.unified_diff(body.splitlines(), new.splitlines(), "README.md", "now printed",
                                                lineterm="", n=1)
                    print(f"stale: {first}\n" + "\n".join(list(diff)[:40]))
            return "```console\n" + new + "```"

        new_text = BLOCK.sub(replace, text)
        if not args.check:
            refresh_images(work, images)
    if args.check:
        print(f"{stale} README example block(s) out of date")
        return 1 if stale else 0
    readme.write_text(new_text, encoding="utf-8")
    print(f"refreshed {stale} README example block(s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
