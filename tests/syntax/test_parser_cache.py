"""The analysed grammar kept between runs (lark's cache in the user's cache directory)."""

from __future__ import annotations

import os
import subprocess
import sys

from thresholdc.syntax import parser

RULES = "input a, b, c\noutput y\nt = a and not b\ny = atleast(2, t, c, a -> b)\n"

# Prints the parsed program's repr, so runs with and without a cache can be compared.
_PARSE = f"from thresholdc.syntax import parse\nprint(repr(parse({RULES!r})))\n"


def _run(cache_dir: str) -> str:
    env = {**os.environ, "THRESHOLDC_CACHE_DIR": cache_dir}
    done = subprocess.run([sys.executable, "-c", _PARSE], capture_output=True, text=True,
                          env=env, check=True)
    assert done.stderr == ""
    return done.stdout


def test_the_cache_is_written_once_and_parses_the_same(tmp_path):
    first = _run(str(tmp_path))
    files = sorted(os.listdir(tmp_path))
    assert len(files) == 1 and files[0].startswith("rules-grammar-")
    stamp = os.stat(tmp_path / files[0]).st_mtime_ns
    assert _run(str(tmp_path)) == first  # read from the cache
    assert os.stat(tmp_path / files[0]).st_mtime_ns == stamp  # and not rewritten
    assert _run("") == first  # no cache at all


def test_a_damaged_cache_file_is_rebuilt_silently(tmp_path):
    first = _run(str(tmp_path))
    (name,) = os.listdir(tmp_path)
    (tmp_path / name).write_bytes(b"not a cache\n\x80\x04garbage")
    assert _run(str(tmp_path)) == first
    assert b"garbage" not in (tmp_path / name).read_bytes()


def test_no_cache_when_the_variable_is_empty_or_the_directory_cannot_be_made(tmp_path,
                                                                              monkeypatch):
    monkeypatch.setenv("THRESHOLDC_CACHE_DIR", "")
    assert parser._cache_file("g") is False
    blocker = tmp_path / "file"
    blocker.write_text("x")
    monkeypatch.setenv("THRESHOLDC_CACHE_DIR", str(blocker / "sub"))
    assert parser._cache_file("g") is False


def test_the_cache_name_follows_the_grammar(tmp_path, monkeypatch):
    monkeypatch.setenv("THRESHOLDC_CACHE_DIR", str(tmp_path))
    one, two = parser._cache_file("start: A"), parser._cache_file("start: B")
    assert one != two and os.path.dirname(str(one)) == str(tmp_path)


def test_a_new_cache_directory_is_private_to_the_user(tmp_path, monkeypatch):
    # lark unpickles the file, so no other user may write there.
    monkeypatch.setenv("THRESHOLDC_CACHE_DIR", str(tmp_path / "new"))
    parser._cache_file("g")
    assert os.stat(tmp_path / "new").st_mode & 0o077 == 0
