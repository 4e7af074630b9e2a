"""Saving an edited study keeps the user's file: comments, key order, layout, bytes."""

from __future__ import annotations

import difflib
import hashlib
import re

from workbench.study.studyfile import DEMO_STUDY, read_study, write_study

#: A user's notes around the demo study's own lines (comments at the head, above a table,
#: after a value, blank lines, a hand-aligned block).
HEADER = ("# Fleet study of the ops team (edited by hand, keep these notes)\n"
          "# owner: planning desk\n\n")


def commented_study(tmp_path, *, newline: str = "\n"):
    text = HEADER + DEMO_STUDY.read_text(encoding="utf-8")
    text = text.replace("horizon_years = 8\n", "horizon_years = 8   # board asked for 8\n")
    text = text.replace("[programme]\n", "# -- money --\n[programme]\n")
    path = tmp_path / "fleet.toml"
    path.write_bytes(text.replace("\n", newline).encode("utf-8"))
    # the demo's fleet files are named relative to the demo's folder
    for sub in ("profiles", "vehicles", "maps"):
        (tmp_path / sub).symlink_to(DEMO_STUDY.parents[1] / sub)
    return path


def changed_lines(before: str, after: str) -> list[str]:
    # difflib (Python standard library) lists every line that differs, with -/+ marks.
    return [line for line in difflib.unified_diff(before.splitlines(), after.splitlines(),
                                                  lineterm="", n=0)
            if not line.startswith(("---", "+++", "@@"))]


def test_one_edit_changes_exactly_its_line(tmp_path):
    path = commented_study(tmp_path)
    before = path.read_text(encoding="utf-8")
    study = read_study(path)
    write_study(study.with_value("programme.horizon_years", 10), path)
    after = path.read_text(encoding="utf-8")
    assert changed_lines(before, after) == ["-horizon_years = 8   # board asked for 8",
                                            "+horizon_years = 10   # board asked for 8"]
    assert after.startswith(HEADER)
    assert read_study(path).inputs.horizon_years == 10


def test_edits_in_a_row_and_a_removal_touch_only_their_lines(tmp_path):
    path = commented_study(tmp_path)
    before = path.read_text(encoding="utf-8")
    study = read_study(path)
    edited = study.with_value("prices.lpg", "0.80 per L").with_values(
        {"candidates[0].conversion_cost": 2500}, remove=["escalation.lpg"])
    diff = changed_lines(before, edited.to_toml())
    assert [d[0] for d in diff].count("-") == 3 and [d[0] for d in diff].count("+") == 2
    assert '+lpg = "0.80 per L"' in diff and "+conversion_cost = 2500" in diff
    assert study.to_toml() == before  # the study edited from is unchanged
    # 0.80 per L is 800 per m3 (1 m3 = 1000 L, SI definition of the litre)
    assert abs(edited.inputs.prices["lpg"][0].value - 800.0) < 1e-9


def test_digest_is_sha256_of_the_file_bytes(tmp_path):
    # FIPS 180-4 SHA-256 through hashlib, over the bytes on disk (what `sha256sum` prints);
    # Windows line ends too, which a text read would have turned into "\n".
    path = commented_study(tmp_path, newline="\r\n")
    study = read_study(path)
    assert study.digest() == hashlib.sha256(path.read_bytes()).hexdigest()
    edited = study.with_value("programme.horizon_years", 9)
    written = write_study(edited, tmp_path / "edited.toml")
    assert edited.digest() == hashlib.sha256(written.read_bytes()).hexdigest()
    assert b"horizon_years = 9   # board asked for 8\r\n" in written.read_bytes()


def test_report_hash_matches_the_study_file(tmp_path, run_cli):
    path = commented_study(tmp_path)
    code, _, err = run_cli("study", "report", str(path), "-o", str(tmp_path / "r.html"),
                           "--draws", "0")
    assert code == 0, err
    html = (tmp_path / "r.html").read_text(encoding="utf-8")
    shown = re.search(r'id="input-hash">([0-9a-f]{64})<', html).group(1)
    assert shown == hashlib.sha256(path.read_bytes()).hexdigest()


def test_saving_from_the_panels_changes_only_the_edited_line(tmp_path):
    from workbench.interfaces.panels import open_study

    path = commented_study(tmp_path)
    before = path.read_text(encoding="utf-8")
    app = open_study(read_study(path), draws=50, upload_dir=tmp_path / "uploads",
                     export_dir=tmp_path)
    app.economics.prices["lpg"].params["mode"].value = "0.77 per L"
    app.export.study_name.value = "saved.toml"
    app.export.save_button.click()
    after = (tmp_path / "saved.toml").read_text(encoding="utf-8")
    diff = changed_lines(before, after)
    assert len(diff) == 2 and diff[0].startswith("-lpg = ") and diff[1].startswith("+lpg = ")
    assert 'mode = "0.77 per L"' in diff[1] and after.startswith(HEADER)
