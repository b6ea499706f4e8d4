"""The log of takes beside a stock file: the history of takes, and undoing them (the last, or back to one).

Each take and each undo is one JSON line in ``<stock>.takes.jsonl``, written before the stock file is
switched, with the file's checksums before and after.  Whether an entry reached the file is read from
that chain: an entry landed when the next entry starts from its "after" checksum (or, for the last
one, when the file is at its "after" checksum now); an entry whose successor (or the file) is still
at its "before" checksum was cut off before the switch, and so was one marked aborted.  A take is in
the file when it landed and no landed undo names it.

Undo walks back: the last take in the file first, then the one before, down to the take asked for.
Each step checks that the file is byte for byte what that take left, puts its backup back (after
checking the backup's own checksum) or, without the backup, writes the old quantities back into the
cells, and is itself locked, backed up, logged and written atomically like a take.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

from .files import stamp
from .take import (Change, TakeError, TakePlan, TakeResult, _new_bytes, _read, commit, file_checksum, locked,
                   log_path, target_of)

__all__ = ["TakeRecord", "read_log", "history", "undo_takes", "undo"]


@dataclass(frozen=True)
class TakeRecord:
    """One take of the log, numbered from 1 in the order they were made, and where it stands now."""

    number: int
    id: str
    source: str
    units: int
    cells: int
    parts: int
    state: str  # "in the file", "undone", "did not reach the file"
    backup: str | None

    @property
    def when(self) -> str:
        """'2026-05-10 12:00:01' from the id (a UTC time stamp)."""
        t = self.id
        if len(t) >= 15 and t[8] == "T":
            return f"{t[0:4]}-{t[4:6]}-{t[6:8]} {t[9:11]}:{t[11:13]}:{t[13:15]}"
        return t

    def to_dict(self) -> dict:
        return {"number": self.number, "id": self.id, "when": self.when, "from": self.source, "units": self.units,
                "cells": self.cells, "parts": self.parts, "state": self.state, "backup": self.backup}


def read_log(stock_file) -> list[dict]:
    """The entries of the log (none when there is no log); TakeError names a damaged line."""
    log = log_path(stock_file)
    if not log.exists():
        return []
    try:
        text = log.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise TakeError(f"{log}: the log of takes cannot be read ({exc})") from None
    entries = []
    for n, line in enumerate(text.splitlines(), start=1):
        if not line.strip():
            continue
        try:
            entry = json.loads(line)
        except ValueError:
            entry = None
        if not isinstance(entry, dict) or not isinstance(entry.get("id"), str) or \
                entry.get("action") not in ("take", "undo", "aborted"):
            raise TakeError(f"{log}, line {n}: the log of takes is damaged; fix or remove that line") from None
        entries.append(entry)
    return entries


def _landed(entries: list[dict], current: str | None) -> dict[str, bool]:
    """For each take and undo entry (by id): whether it reached the file (see the module's docstring)."""
    aborted = {e.get("take") for e in entries if e["action"] == "aborted"}
    acts = [e for e in entries if e["action"] in ("take", "undo") and e["id"] not in aborted]
    out = {}
    for i, e in enumerate(acts):
        following = acts[i + 1].get("checksum_before") if i + 1 < len(acts) else current
        out[e["id"]] = not (following == e.get("checksum_before") and following != e.get("checksum_after"))
    for e in entries:
        if e["action"] in ("take", "undo") and e["id"] in aborted:
            out[e["id"]] = False
    return out


def _state(entries: list[dict], current: str | None) -> tuple[list[dict], dict[str, str]]:
    """(every take entry in order, take id -> its state)."""
    landed = _landed(entries, current)
    undone = {e.get("take") for e in entries if e["action"] == "undo" and landed.get(e["id"])}
    takes = [e for e in entries if e["action"] == "take"]
    state = {}
    for t in takes:
        state[t["id"]] = ("did not reach the file" if not landed.get(t["id"]) else
                          "undone" if t["id"] in undone else "in the file")
    return takes, state


def _int(x) -> int:
    return x if isinstance(x, int) and not isinstance(x, bool) else 0


def _when(t: dict) -> str:
    return str(t.get("when") or t["id"])


def _current(target: Path) -> str | None:
    try:
        return file_checksum(target.read_bytes())
    except OSError:
        return None


def history(stock_file) -> list[TakeRecord]:
    """Every take logged for the stock file, oldest first, with its state now."""
    target = Path(stock_file)
    if not target.exists():
        raise TakeError(f"{target}: no such stock file")
    entries = read_log(target)
    takes, state = _state(entries, _current(target))
    out = []
    for n, t in enumerate(takes, start=1):
        changes = t.get("changes") if isinstance(t.get("changes"), list) else []
        try:
            parts = sum(int(c.get("old_qty", 0)) - int(c.get("new_qty", 0)) for c in changes)
        except (TypeError, ValueError, AttributeError):
            parts = 0
        out.append(TakeRecord(n, t["id"], str(t.get("from", "")), _int(t.get("units")), len(changes), parts,
                              state[t["id"]], t.get("backup")))
    return out


def _pick(takes_in_file: list[dict], all_takes: list[dict], state: dict[str, str], to) -> list[dict]:
    """The takes to undo, newest first: the last one, or every one back to take ``to`` (number or id)."""
    if to is None:
        return [takes_in_file[-1]]
    text = str(to).strip()
    chosen = None
    if text.isdigit() and 1 <= int(text) <= len(all_takes):
        chosen = all_takes[int(text) - 1]
    else:
        chosen = next((t for t in all_takes if t["id"] == text), None)
    if chosen is None:
        raise TakeError(f"there is no take {text!r} in the history ({len(all_takes)} logged); see --history")
    if state[chosen["id"]] != "in the file":
        raise TakeError(f"take {text} is not in the file ({state[chosen['id']]}); nothing changed")
    pos = next(i for i, t in enumerate(takes_in_file) if t["id"] == chosen["id"])
    return takes_in_file[pos:][::-1]


def undo_takes(stock_file, *, to=None, dry_run: bool = False) -> list[TakeResult]:
    """Undo the last take in the file, or (``to``: a number from the history, or an id) every take
    back to and including that one, newest first.  One TakeResult per take put back."""
    target = target_of(stock_file)
    lock = None if dry_run else locked(target)
    try:
        notes = [lock.note] if lock is not None and lock.note else []
        entries = read_log(target)
        data = _read(target)
        current = file_checksum(data)
        all_takes, state = _state(entries, current)
        for t in all_takes:
            if state[t["id"]] == "did not reach the file" and not any(
                    e["action"] == "aborted" and e.get("take") == t["id"] for e in entries):
                notes.append(f"the take of {_when(t)} never reached the file (it was cut off); skipped")
        in_file = [t for t in all_takes if state[t["id"]] == "in the file"]
        if not in_file:
            raise TakeError(f"{log_path(target)}: no take to undo for {target}")
        results = []
        for t in _pick(in_file, all_takes, state, to):
            new, changes, step_notes = _undo_bytes(target, t, data, current)
            plan = TakePlan(str(target), _int(t.get("units")), changes, current)
            after = file_checksum(new)
            if dry_run:
                results.append(TakeResult(plan, None, None, after, dry_run=True, undone=t["id"],
                                          notes=tuple(notes + step_notes)))
            else:
                when = stamp()
                entry = {"id": when, "action": "undo", "when": when, "take": t["id"],
                         "stock_file": target.name, "checksum_before": current, "checksum_after": after,
                         "backup": None}
                backup = commit(target, data, new, entry, f"put back the take of {_when(t)}")
                results.append(TakeResult(plan, str(backup), str(log_path(target)), after, undone=t["id"],
                                          notes=tuple(notes + step_notes)))
            notes = []
            data, current = new, after
        return results
    finally:
        if lock is not None:
            lock.release()


def _undo_bytes(target: Path, t: dict, data: bytes, current: str) -> tuple[bytes, tuple[Change, ...], list[str]]:
    """The file as it was before take ``t``, from the backup or by writing the old cells back."""
    if t.get("checksum_after") != current:
        raise TakeError(
            f"{target}: the file is not what the take of {_when(t)} left (it was edited since), so undo"
            f" would lose those edits; nothing changed. The file as it was before that take is in"
            f" {t.get('backup')}")
    try:
        changes = tuple(Change(c.get("sheet"), int(c["row"]), int(c["column"]), int(c["old_qty"]),
                               int(c["new_qty"]), str(c.get("part", "")), str(c.get("location", "")))
                        for c in t.get("changes") or [])
    except (KeyError, TypeError, ValueError, AttributeError):
        raise TakeError(f"{log_path(target)}: the entry of the take of {_when(t)} is damaged; nothing changed"
                        ) from None
    bpath = target.with_name(Path(t["backup"]).name) if isinstance(t.get("backup"), str) else None
    if bpath is not None and bpath.exists():
        b = bpath.read_bytes()
        if file_checksum(b) == t.get("checksum_before"):
            return b, changes, []
    rebuilt = _new_bytes(target, data, changes, use_old=True)
    if not target.suffix.lower().startswith(".xls") and file_checksum(rebuilt) != t.get("checksum_before"):
        raise TakeError(f"{target}: cannot rebuild the file as it was before the take of {_when(t)}; nothing"
                        " changed")
    return rebuilt, changes, ["the backup was missing or altered; the old quantities were written back instead"]


def undo(stock_file, *, dry_run: bool = False) -> TakeResult:
    """Reverse the last take that reached the stock file (``undo_takes`` for several)."""
    return undo_takes(stock_file, dry_run=dry_run)[-1]
