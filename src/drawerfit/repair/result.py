"""The answer to "what in my drawer replaces this transistor": its repr, dict (`match npn|pnp --json`)
and table."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

__all__ = ["SubstituteResult", "substitute_dict"]

_FIGURES = ("hfe_min", "hfe_max", "vceo", "ic_max", "pd", "vbe", "vce_sat")


def substitute_dict(s, board_fails=frozenset()) -> dict:
    """One judged line for JSON: where it is, its figures, each check, its hFE fit and stage verdict
    (each break marked ``also_on_board`` when the stage fails that check with its own transistor too)."""
    ln = s.line
    stage = None
    if s.stage is not None:
        stage = s.stage.to_dict()
        for b in stage["breaks"]:
            b["also_on_board"] = b["check"] in board_fails
    return {"rank": s.rank, "status": s.status, "label": ln.label or None, "polarity": ln.polarity,
            "location": ln.location, "qty": ln.qty, "source": ln.source.to_dict(), "pins": ln.pins or None,
            "same_as_board": s.same_as_board, "figures": {k: getattr(ln, k) for k in _FIGURES},
            "assumed": list(ln.assumed), "checks": [c.to_dict() for c in s.checks],
            "hfe_fit": None if s.hfe is None else s.hfe.to_dict(),
            "stage": stage}


@dataclass(frozen=True, repr=False)
class SubstituteResult:
    """Every transistor line of the drawer judged against ``requirement``, best first
    (``repair.substitutes`` says how), with the stage's verdicts when a spec was given.

    ``board`` is the verdict on the stage with its own transistor (None without a spec);
    ``top`` limits the lines each list of ``to_dict`` shows (None: all).
    """

    requirement: Any
    substitutes: tuple
    spec: Any = None
    board: Any = None
    cautions: tuple = ()
    stock: Any = None
    top: int | None = None

    @property
    def passing(self) -> tuple:
        """Lines known to meet every check."""
        return tuple(s for s in self.substitutes if s.status == "pass")

    @property
    def unknown(self) -> tuple:
        """Lines where nothing fails but a figure the requirement asks about is not in the stock file."""
        return tuple(s for s in self.substitutes if s.status == "unknown")

    @property
    def failing(self) -> tuple:
        """Lines of the right polarity that fail a check."""
        return tuple(s for s in self.substitutes if s.status == "fail" and s.right_polarity)

    @property
    def other_polarity(self) -> tuple:
        return tuple(s for s in self.substitutes if not s.right_polarity)

    @property
    def keeps(self) -> tuple:
        """Lines that keep the stage in spec unchanged (with a spec), in rank order."""
        return tuple(s for s in self.substitutes if s.stage is not None and s.stage.keeps)

    @property
    def board_fails(self) -> frozenset:
        """The checks the stage fails with its own transistor (with a spec)."""
        return frozenset(b.check for b in self.board.breaks) if self.board is not None else frozenset()

    def __repr__(self) -> str:
        best = self.passing[0].line.label if self.passing else "none"
        stage = f"; {len(self.keeps)} keep the stage in spec" if self.spec is not None else ""
        return (f"<SubstituteResult {self.requirement.describe()}: {len(self.passing)} meet it, "
                f"{len(self.unknown)} unknown, {len(self.failing)} fail{stage}; best {best}>")

    def _cut(self, items) -> list:
        return list(items if self.top is None else items[: self.top])

    def to_dict(self) -> dict:
        """The `match npn|pnp --json` shape: requirement, stage, substitutes (met or unknown, best
        first), failing (right polarity first), counts, cautions, and the drawer's notes."""
        out: dict = {"requirement": self.requirement.to_dict(), "stage": None}
        if self.spec is not None:
            st = self.spec
            t = self.board.analysis.stage.transistor if self.board and self.board.analysis else None
            out["stage"] = {
                "spec": st.path, "title": st.title, "topology": st.topology, "polarity": st.polarity,
                "supply": st.supply, "mains": st.mains,
                "targets": st.targets.given() if st.targets is not None else {},
                "board": {"label": (t.label or None) if t else None, **self.board.to_dict()},
            }
        fails = self.board_fails
        out["substitutes"] = [substitute_dict(s, fails) for s in self._cut(self.passing + self.unknown)]
        out["failing"] = [substitute_dict(s, fails) for s in self._cut(self.failing + self.other_polarity)]
        out["counts"] = {"pass": len(self.passing), "unknown": len(self.unknown), "fail": len(self.failing),
                         "other_polarity": len(self.other_polarity),
                         "keeps_stage": len(self.keeps) if self.spec is not None else None, "top": self.top}
        out["cautions"] = [c.to_dict() for c in self.cautions]
        if self.stock is not None:
            out.update(warnings=list(self.stock.warnings), assumptions=list(self.stock.assumptions),
                       problems=[p.to_dict() for p in self.stock.problems])
        return out

    def to_pandas(self):
        """One row per transistor line, best first: status, figures, margins, hFE fit, stage verdict."""
        import pandas as pd

        cols = ["rank", "status", "label", "polarity", "location", "qty", "vceo", "ic_max", "pd", "hfe_min",
                "hfe_max", "vce_sat", "vceo_margin", "ic_max_margin", "pd_margin", "hfe_distance", "hfe_coverage",
                "why", "stage", "stage_breaks", "row"]
        rows = []
        for s in self.substitutes:
            ln, by = s.line, {c.name: c for c in s.checks}
            rows.append({
                "rank": s.rank, "status": s.status, "label": ln.label, "polarity": ln.polarity,
                "location": ln.location, "qty": ln.qty, **{k: getattr(ln, k) for k in
                                                         ("vceo", "ic_max", "pd", "hfe_min", "hfe_max", "vce_sat")},
                "vceo_margin": by["VCEO"].margin if "VCEO" in by else None,
                "ic_max_margin": by["IC max"].margin if "IC max" in by else None,
                "pd_margin": by["PD"].margin if "PD" in by else None,
                "hfe_distance": None if s.hfe is None else s.hfe.distance,
                "hfe_coverage": None if s.hfe is None else s.hfe.coverage,
                "why": "; ".join(c.message for c in s.checks if c.ok is not True),
                "stage": None if s.stage is None else s.stage.status,
                "stage_breaks": None if s.stage is None else ", ".join(b.check for b in s.stage.breaks),
                "row": ln.source.row,
            })
        return pd.DataFrame(rows, columns=cols)
