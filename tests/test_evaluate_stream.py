"""``optimiser evaluate`` on long designs tables: read, checked, sized and written in chunks.

Source: the project's own rules: the streamed output reads back to exactly the numbers of the
whole table (Arrow's writer, every float in its shortest exact form), the same bytes whether
written to a file or to standard output; a bad row anywhere is refused by its row number in
the file, in one line, and nothing is written (an existing file is left as it was).
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import optimiser
from optimiser import designs as designs_module
from optimiser.designs import iter_designs_csv, read_designs_csv
from optimiser.evaluation import EVALUATE_CHUNK_ROWS, evaluated_csv_pieces, evaluated_csv_text
from optimiser.study import StudyError, load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
DEFAULT = PROBLEMS / "high_strip_utility.toml"
FLAPS = ["none", "plain", "single_slotted", "fowler", "single_slotted+slats"]


def _cli(args, cwd):
    return subprocess.run([sys.executable, "-m", "optimiser", *map(str, args)], cwd=cwd,
                          capture_output=True, text=True, timeout=600)


def _random_designs(rows, seed=2):
    rng = np.random.default_rng(seed)
    return pd.DataFrame({"wing_loading_N_m2": rng.uniform(300, 2200, rows),
                         "power_loading_N_kW": rng.uniform(30, 130, rows),
                         "aspect_ratio": rng.uniform(4, 14, rows),
                         "flap": rng.choice(FLAPS, rows)})


@pytest.fixture(scope="module")
def study():
    return load_study(DEFAULT)


def test_csv_text_reads_back_to_the_same_numbers_exactly(study):
    # Arrow's writer: every float in its shortest exact form (it reads back to the same
    # double), NaN empty, booleans true/false; the slices join to the whole text
    import io
    frame = optimiser.evaluate(study, _random_designs(5000))
    frame.loc[3, "trip_fuel_kg"] = np.nan
    frame.loc[4, "trip_fuel_kg"] = -0.0
    text = evaluated_csv_text(frame)
    assert "".join(evaluated_csv_pieces(frame)) == text
    back = pd.read_csv(io.StringIO(text), keep_default_na=False, na_values=[""])
    assert list(back.columns) == list(frame.columns)
    for c in frame.columns:
        if frame[c].dtype.kind == "f":
            assert np.array_equal(back[c].to_numpy(float), frame[c].to_numpy(float),
                                  equal_nan=True), c
        elif frame[c].dtype.kind == "b":
            assert (back[c] == frame[c]).all(), c
        else:
            assert (back[c].fillna("").astype(str) == frame[c].astype(str)).all(), c
    assert np.signbit(back.loc[4, "trip_fuel_kg"])
    assert evaluated_csv_text(frame.iloc[:0]) == ",".join(frame.columns) + "\n"


def test_chunks_name_rows_by_their_number_in_the_file(study, tmp_path):
    table = _random_designs(30).astype(object)
    path = tmp_path / "d.csv"
    table.to_csv(path, index=False)
    whole = read_designs_csv(study, path)
    chunks = list(iter_designs_csv(study, path, 7))
    assert [len(c) for c in chunks] == [7, 7, 7, 7, 2]
    pd.testing.assert_frame_equal(pd.concat(chunks, ignore_index=True), whole)
    table.loc[22, "aspect_ratio"] = "eight"         # row 23 of the file, in the 4th chunk
    table.to_csv(path, index=False)
    with pytest.raises(StudyError, match=r"row 23, column 'aspect_ratio': got 'eight'"):
        list(iter_designs_csv(study, path, 7))
    table.loc[22, "aspect_ratio"] = 8.0
    table.loc[28, "flap"] = "fowlr"
    table.to_csv(path, index=False)
    with pytest.raises(StudyError, match=r"row 29, column 'flap': unknown flap type 'fowlr'"):
        list(iter_designs_csv(study, path, 7))


def test_small_read_blocks_split_lines_and_bytes_as_the_whole_file(study, tmp_path,
                                                                    monkeypatch):
    monkeypatch.setattr(designs_module, "READ_BLOCK_BYTES", 5)
    text = ("\ufeffwing_loading_N_m2,power_loading_N_kW,aspect_ratio,flap\r\n"
            "1000,70,8,fowler\r\n\r\n1100,72,9,plain\r\n")
    path = tmp_path / "crlf.csv"
    path.write_bytes(text.encode("utf-8"))
    table = read_designs_csv(study, path)
    assert table["aspect_ratio"].tolist() == [8.0, 9.0]
    assert table["flap"].tolist() == ["fowler", "plain"]
    raw = text.encode("utf-8") + "1200,73,9,pl\u00e4in\n".encode("latin-1")
    path.write_bytes(raw)
    with pytest.raises(UnicodeDecodeError) as whole:
        raw.decode("utf-8-sig")
    with pytest.raises(StudyError, match=rf"byte {whole.value.start} is not UTF-8"):
        read_designs_csv(study, path)


def test_a_bad_row_in_the_third_chunk_writes_nothing(tmp_path):
    rows = 2 * EVALUATE_CHUNK_ROWS + 1000
    table = _random_designs(rows).astype(object)
    bad_row = 2 * EVALUATE_CHUNK_ROWS + 500        # counted from 1 under the header
    table.loc[bad_row - 1, "wing_loading_N_m2"] = "-5"
    src = tmp_path / "long.csv"
    table.to_csv(src, index=False)
    out = tmp_path / "out.csv"
    out.write_text("kept\n")
    proc = _cli(["evaluate", DEFAULT, "--designs", src, "--out", out, "--force"], tmp_path)
    assert proc.returncode == 2 and "Traceback" not in proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1
    assert f"row {bad_row}, column 'wing_loading_N_m2': got '-5'" in lines[0]
    assert out.read_text() == "kept\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["long.csv", "out.csv"]
    stdout = _cli(["evaluate", DEFAULT, "--designs", src, "--out", "-"], tmp_path)
    assert stdout.returncode == 2 and stdout.stdout == ""


def test_standard_output_streams_the_same_bytes_as_the_file(tmp_path):
    out = tmp_path / "out.csv"
    to_file = _cli(["evaluate", DEFAULT, "--out", out], tmp_path)
    assert to_file.returncode == 0
    to_stdout = _cli(["evaluate", DEFAULT, "--out", "-"], tmp_path)
    assert to_stdout.returncode == 0
    assert to_stdout.stdout == out.read_text()
    assert to_stdout.stdout.startswith("wing_loading_N_m2,power_loading_N_kW,aspect_ratio,flap,")
    assert "9 design(s)" in to_stdout.stderr and optimiser.CAUTION in to_stdout.stderr
    expect = optimiser.evaluate(load_study(DEFAULT),
                                pd.read_csv(PROBLEMS / "high_strip_utility_designs.csv"))
    assert out.read_text() == evaluated_csv_text(expect)
