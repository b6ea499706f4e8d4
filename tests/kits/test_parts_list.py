"""Reading a parts list: the messages about a line quote at most a short excerpt.

Expected values: the list the test writes (twelve designators from the range R1-R12, listed twice).
"""

from __future__ import annotations

from drawerfit.kits.parts_list import read_kit_list


def test_a_long_list_of_repeated_designators_is_quoted_in_brief(tmp_path):
    path = tmp_path / "list.csv"
    path.write_text("Designators,Value\nR1-R12,1k\nR1-R12,2k\n", encoding="utf-8")
    kit_list = read_kit_list(str(path))
    assert [ln.designators for ln in kit_list.lines] == [tuple(f"R{k}" for k in range(1, 13))]
    (issue,) = kit_list.problems
    assert issue.row == 3 and "listed twice (first at" in issue.message
    # 40 characters of "R1, R2, ..., R12" and an ellipsis: the whole would be 49
    assert issue.text == "R1, R2, R3, R4, R5, R6, R7, R8, R9, R10,…"
