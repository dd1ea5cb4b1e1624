"""The result as DataFrames and as HTML: every column carries the result's own numbers, in g/mol."""

import io
import json

import numpy as np
import pandas as pd
import pytest

from molid.io.json_document import to_json
from molid.pipeline.identify import identify


@pytest.fixture(scope="module")
def result():
    return identify("sample_runs/qa_cylinders.csv", profile="sample_runs/qa_lab_profile.toml")


def test_run_frame_equals_the_result_arrays(result):
    """Checks behaviour: one row per run; M, u, U, M ∓ U are the result's arrays × 1000; ids as read."""
    frame = result.to_frame()
    assert len(frame) == len(result.table)
    assert list(frame["run"]) == list(result.table.text["run"])
    assert list(frame["row"]) == list(result.table.row_numbers)
    np.testing.assert_array_equal(frame["molar_mass_g_per_mol"], result.molar_mass * 1e3)
    np.testing.assert_array_equal(frame["u_g_per_mol"], result.u * 1e3)
    np.testing.assert_allclose(frame["U_g_per_mol"], result.U * 1e3, rtol=1e-15)
    np.testing.assert_allclose(frame["low_g_per_mol"], (result.molar_mass - result.U) * 1e3, rtol=1e-12)
    np.testing.assert_allclose(frame["high_g_per_mol"], (result.molar_mass + result.U) * 1e3, rtol=1e-12)
    for index in np.flatnonzero(result.ok):
        best = result.ranking.run_candidates(index, 1)[0]
        assert frame.at[index, "candidate"] == best["name"]
        assert frame.at[index, "candidate_verdict"] == best["verdict"]
    assert frame["errors"].isna().to_numpy().tolist() == result.ok.tolist()


def test_run_frame_agrees_with_the_json_document(result):
    """Checks behaviour: the frame and ``--json`` give the same numbers, labels and verdicts."""
    document = json.loads(to_json(result, 1))
    frame = result.to_frame()
    for index, entry in enumerate(document["results"]):
        block = entry["molar_mass"]
        assert frame.at[index, "molar_mass_g_per_mol"] == pytest.approx(block["value"], rel=1e-15)
        assert frame.at[index, "U_g_per_mol"] == pytest.approx(block["U"], rel=1e-15)
        assert frame.at[index, "model"] == block["model"]
        if "label" in entry:
            assert frame.at[index, "label_verdict"] == entry["label"]["verdict"]


def test_errors_give_nan_numbers_and_their_messages():
    """Checks behaviour: a row with an error keeps its place, NaN numbers and its message naming the row."""
    text = ("run,method,mass_tare,mass_filled,volume,temperature,pressure\n"
            "a,evacuated-bulb,150.0000,150.9050,500,21.0,100.8\n"
            "b,evacuated-bulb,150.0000,oops,500,21.0,100.8\n")
    frame = identify(io.StringIO(text)).to_frame()
    assert frame.loc[1, "run"] == "b" and np.isnan(frame.loc[1, "molar_mass_g_per_mol"])
    assert "row 3" in frame.loc[1, "errors"] and pd.isna(frame.loc[1, "candidate"])
    assert frame.loc[0, "candidate"] == "carbon dioxide"


def test_samples_frame_equals_the_combination(result):
    """Checks behaviour: one row per sample with the combination's value, u (× 1000), n and Birge ratio."""
    frame = result.samples_frame().set_index("sample")
    combined = result.samples.set_index("sample")
    assert list(frame.index) == list(result.sample_runs)
    for name, row in combined.iterrows():
        assert frame.at[name, "molar_mass_g_per_mol"] == row["value"] * 1e3
        assert frame.at[name, "u_g_per_mol"] == row["u"] * 1e3
        assert frame.at[name, "U_g_per_mol"] == pytest.approx(2 * row["u"] * 1e3, rel=1e-15)
        assert frame.at[name, "n"] == row["n"]
        assert frame.at[name, "runs"] == ", ".join(result.sample_runs[name])
        assert frame.at[name, "birge_ratio"] == row["birge_ratio"] or np.isnan(row["birge_ratio"])
        assert frame.at[name, "candidate"] == result.ranking.sample_candidates(name, 1)[0]["name"]
        label = result.ranking.sample_extras(name).get("label")
        assert frame.at[name, "label_verdict"] == label["verdict"] if label else \
            pd.isna(frame.at[name, "label_verdict"])


def test_candidates_frame_of_a_sample_and_stacked(result):
    """Checks behaviour: the ranked list of a sample as rows; all samples then runs stacked with a key."""
    name = result.samples["sample"].iloc[0]
    frame = result.candidates_frame(name)
    items = result.ranking.sample_candidates(name)
    assert list(frame["candidate"]) == [item["name"] for item in items]
    assert list(frame["rank"]) == list(range(1, len(items) + 1))
    assert frame["measured_g_per_mol"].iloc[0] == items[0]["measured"]["value"]
    assert frame["U_measured_g_per_mol"].iloc[0] == pytest.approx(2 * items[0]["measured"]["u"])
    stacked = result.candidates_frame(top=3)
    assert set(stacked.groupby("level")["key"].nunique().items()) == {
        ("sample", len(result.sample_runs)), ("run", int(result.ok.sum()))}
    assert (stacked.groupby(["level", "key"]).size() == 3).all()
    with pytest.raises(KeyError, match="no sample"):
        result.candidates_frame("no such cylinder")


def test_inputs_frame_is_the_users_cells(result):
    """Checks behaviour: the user's cells as typed, with the run frame's index."""
    inputs = result.inputs_frame()
    pd.testing.assert_frame_equal(inputs, result.table.raw.reset_index(drop=True))
    assert inputs.index.equals(result.to_frame().index)


def test_html_is_escaped_and_lists_each_sample():
    """Checks behaviour: user text in the Jupyter view is escaped; each sample gets its table."""
    text = ("run,sample,method,mass_tare,mass_filled,volume,temperature,pressure\n"
            'a,<script>alert(1)</script>,evacuated-bulb,150.0000,150.9050,500,21.0,100.8\n'
            "b,&amp,evacuated-bulb,150.0000,150.9048,500,21.1,100.8\n"
            "c,,evacuated-bulb,150.0000,150.9048,500,21.1,100.8\n")
    page = identify(io.StringIO(text))._repr_html_()
    assert "<script>" not in page and "&lt;script&gt;alert(1)&lt;/script&gt;" in page
    assert "Sample &amp;amp:" in page and "Run c:" in page
    assert page.count("<table>") == 3 and "carbon dioxide" in page
