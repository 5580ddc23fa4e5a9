"""Every citation key in the repository is defined on the references page."""

import re
import subprocess
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
PAGE = ROOT / "docs" / "sources.md"
KEY = re.compile(r"\bref:([a-z0-9][a-z0-9.-]*[a-z0-9])")
DEFINED = re.compile(r"^\| `([a-z0-9][a-z0-9.-]*[a-z0-9])` \|", re.MULTILINE)


def _tracked_files():
    try:
        out = subprocess.run(["git", "ls-files"], cwd=ROOT, capture_output=True, text=True,
                             check=True).stdout.split()
        return [ROOT / name for name in out]
    except (OSError, subprocess.CalledProcessError):
        return [p for p in ROOT.rglob("*") if p.is_file() and ".git" not in p.parts
                and ".venv" not in p.parts]


def _defined_keys():
    return set(DEFINED.findall(PAGE.read_text(encoding="utf-8")))


def test_the_page_defines_keys():
    keys = _defined_keys()
    assert len(keys) >= 70
    assert "iec-60063" in keys and "nxp-74hc1g14" in keys


def test_every_cited_key_is_defined():
    keys = _defined_keys()
    cited = {}
    for path in _tracked_files():
        if path == PAGE or not path.is_file():
            continue
        try:
            text = path.read_text(encoding="utf-8")
        except (UnicodeDecodeError, OSError):
            continue
        for key in KEY.findall(text):
            cited.setdefault(key, path.relative_to(ROOT).as_posix())
    assert len(cited) >= 40
    unknown = {key: where for key, where in cited.items() if key not in keys}
    assert unknown == {}


def test_nothing_points_outside_the_repository():
    pattern = re.compile(r"(fa" r"cts|prac" r"tice)\.md|\.\./shared")
    hits = []
    for path in _tracked_files():
        if not path.is_file() or path == Path(__file__).resolve():
            continue
        try:
            text = path.read_text(encoding="utf-8")
        except (UnicodeDecodeError, OSError):
            continue
        if pattern.search(text):
            hits.append(path.relative_to(ROOT).as_posix())
    assert hits == []
