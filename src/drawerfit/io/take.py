"""Take the parts of a design or kit out of the stock file, safely.

The stock file is the user's own record, so a take changes nothing but the quantity cells of the
lines it uses, and only after every check has passed:

1. the stock file must be a plain, writable file (through a symbolic link, the file it points to);
2. a lock file beside it keeps two takes apart (``files.FileLock``; a lock left by a process
   that is gone from this machine is taken over, with a note);
3. the file's checksum must equal the one recorded in the design or kit;
4. every line must hold what the pick list asks of it;
5. a timestamped copy of the file is written beside it before anything changes;
6. an entry goes to the log beside the file (``<name>.takes.jsonl``) before the switch, with the
   checksums before and after, the backup's name and every cell changed;
7. the new file is written to a temporary file in the same folder, flushed to disk, then put in
   place with os.replace, which is atomic on one file system.

Any failure on the way (a full disk, say) leaves the stock file as it was, and no lock, backup or
half-written file behind.  The log, the history and undo are in ``drawerfit.io.take_history``.
"""

from __future__ import annotations

import json
import math
import os
from dataclasses import dataclass, field
from pathlib import Path

from .files import (BACKUP_TAG, LOCK_SUFFIX, LOG_SUFFIX, FileLock, FileRefused, append_line, atomic_write,
                    check_replaceable, create_new, io_message, real_target, stamp)
from ..parts import StockError
from .tables import file_checksum  # the same checksum the loader records in Stock.checksum

__all__ = ["PickEntry", "TakePlan", "Change", "TakeResult", "read_pick_list", "plan_take", "take",
           "log_path", "lock_path", "file_checksum", "pick_entries", "TakeError",
           "take_picks", "PickList"]


class TakeError(StockError):
    """A take or undo that was refused; the stock file is unchanged."""


@dataclass(frozen=True)
class PickEntry:
    """One line of a pick list: so many parts from one row of the stock file."""

    sheet: str | None
    row: int
    per_unit: float
    count: int
    part: str = ""
    location: str = ""
    file: str = ""


@dataclass(frozen=True)
class PickList:
    path: str
    units: int
    stock_checksum: str
    entries: tuple[PickEntry, ...]


@dataclass(frozen=True)
class Change:
    """One quantity cell as it was and as it will be."""

    sheet: str | None
    row: int
    column: int
    old_qty: int
    new_qty: int
    part: str
    location: str

    def to_dict(self) -> dict:
        return {"sheet": self.sheet, "row": self.row, "column": self.column, "old_qty": self.old_qty,
                "new_qty": self.new_qty, "part": self.part, "location": self.location}

    def where(self, file: str) -> str:
        sheet = f", sheet {self.sheet!r}" if self.sheet else ""
        return f"{file}{sheet}, row {self.row}"


@dataclass(frozen=True)
class TakePlan:
    stock_file: str
    units: int
    changes: tuple[Change, ...]
    checksum: str


@dataclass(frozen=True)
class TakeResult:
    plan: TakePlan
    backup: str | None
    log: str | None
    checksum_after: str | None
    dry_run: bool = False
    undone: str | None = None  # id of the take that an undo reversed
    notes: tuple[str, ...] = field(default_factory=tuple)

    def __repr__(self) -> str:
        what = f"undo of {self.undone}" if self.undone else f"take for {self.plan.units} unit(s)"
        parts = sum(abs(c.old_qty - c.new_qty) for c in self.plan.changes)
        state = "dry run" if self.dry_run else "done"
        return (f"<TakeResult {what} on {Path(self.plan.stock_file).name}: {len(self.plan.changes)} cell(s), "
                f"{parts} part(s), {state}>")

    def to_dict(self) -> dict:
        """The `take --json` shape of one take or undo."""
        return {"stock_file": self.plan.stock_file, "dry_run": self.dry_run, "undone": self.undone,
                "units": self.plan.units, "changes": [c.to_dict() for c in self.plan.changes],
                "backup": self.backup, "log": self.log, "checksum_before": self.plan.checksum,
                "checksum_after": self.checksum_after, "notes": list(self.notes)}

    def to_pandas(self):
        """One row per quantity cell changed (or to change)."""
        import pandas as pd

        columns = ["sheet", "row", "column", "old_qty", "new_qty", "part", "location"]
        return pd.DataFrame([c.to_dict() for c in self.plan.changes], columns=columns)


def log_path(stock_file: str | os.PathLike) -> Path:
    """The log of takes, beside the real stock file (a link's takes are the file's takes)."""
    p = real_target(stock_file)
    return p.with_name(p.name + LOG_SUFFIX)


def lock_path(stock_file: str | os.PathLike) -> Path:
    p = real_target(stock_file)
    return p.with_name(p.name + LOCK_SUFFIX)


# --- reading a pick list ---------------------------------------------------------------------


def read_pick_list(path: str | os.PathLike) -> PickList:
    """The pick list of a saved design (TOML) or kit (JSON)."""
    p = Path(path)
    if p.suffix.lower() == ".toml":
        from .saved_design import read_design_tree

        doc = read_design_tree(p, TakeError, "design or kit file")
    else:
        from .kit_file import read_kit_tree

        doc = read_kit_tree(p, TakeError, "design or kit file")
    if not isinstance(doc, dict):
        raise TakeError(f"{p}: expected a table with 'units', 'stock_checksum' and 'pick_list'")
    for key in ("units", "stock_checksum", "pick_list"):
        if key not in doc:
            raise TakeError(f"{p}: no {key!r} in the file; save the design or kit again with this version")
    units = doc["units"]
    if isinstance(units, bool) or not isinstance(units, int) or units < 1:
        raise TakeError(f"{p}: 'units' must be a whole number of at least 1, not {_short(units)}")
    if not isinstance(doc["stock_checksum"], str):
        raise TakeError(f"{p}: 'stock_checksum' must be text, not {_short(doc['stock_checksum'])}")
    if not isinstance(doc["pick_list"], list):
        raise TakeError(f"{p}: 'pick_list' must be a list of entries")
    entries = pick_entries(doc["pick_list"], units, str(p))
    return PickList(str(p), units, doc["stock_checksum"], entries)


def _short(value: object, limit: int = 60) -> str:
    text = repr(value)
    return text if len(text) <= limit else text[:limit] + "…"


def pick_entries(items: list, units: int, where_file: str) -> tuple[PickEntry, ...]:
    """The entries of a ``pick_list`` array (kit JSON or saved design TOML), checked one by one."""
    entries = []
    for i, e in enumerate(items, start=1):
        where = f"{where_file}, pick_list entry {i}"
        try:
            src = e["source"]
            row = src["row"]
            count = e["count"]
            per_unit = e.get("per_unit", count / units)
            sheet = src.get("sheet") or None  # TOML has no null: a CSV's sheet may be written "" or left out
        except (KeyError, TypeError, AttributeError):
            raise TakeError(f"{where}: needs 'source' (with 'row'), 'count' and 'per_unit'") from None
        if isinstance(row, bool) or not isinstance(row, int) or row < 1:
            raise TakeError(f"{where}: 'row' must be a row number, not {_short(row)}")
        if isinstance(count, bool) or not isinstance(count, int) or count < 0:
            raise TakeError(f"{where}: 'count' must be a whole number of parts, not {_short(count)}")
        if isinstance(per_unit, bool) or not isinstance(per_unit, (int, float)) or not math.isfinite(per_unit) \
                or per_unit < 0:
            raise TakeError(f"{where}: 'per_unit' must be a number, not {_short(per_unit)}")
        if sheet is not None and not isinstance(sheet, str):
            raise TakeError(f"{where}: 'sheet' must be a sheet name, not {_short(sheet)}")
        entries.append(PickEntry(sheet=sheet, row=row, per_unit=float(per_unit), count=count,
                                 part=str(e.get("part", ""))[:200], location=str(e.get("location", ""))[:200],
                                 file=str(src.get("file", ""))[:400]))
    return tuple(entries)


def _counts_for_units(pick: PickList, units: int | None) -> dict[tuple[str | None, int], int]:
    """Parts to take from each (sheet, row) for ``units`` builds (default: the list's own)."""
    need: dict[tuple[str | None, int], int] = {}
    for i, e in enumerate(pick.entries, start=1):
        if units is None or units == pick.units:
            n = e.count
        else:
            n_float = e.per_unit * units
            if abs(n_float - round(n_float)) > 1e-9:
                raise TakeError(
                    f"{pick.path}, pick_list entry {i} (row {e.row}): {e.per_unit:g} parts per unit does not"
                    f" scale to {units} units; make the kit or design again for {units} units")
            n = int(round(n_float))
        key = (e.sheet, e.row)
        need[key] = need.get(key, 0) + n
    return need


# --- planning --------------------------------------------------------------------------------


def plan_take(pick: PickList, stock_file: str | os.PathLike, units: int | None = None,
              data: bytes | None = None) -> TakePlan:
    """Check a pick list against the stock file and list the cell changes; changes nothing."""
    from ..stock import load_stock

    path = Path(stock_file)
    if data is None:
        data = _read(path)
    checksum = file_checksum(data)
    if pick.stock_checksum != checksum:
        raise TakeError(
            f"{path}: the stock file changed since {pick.path} was made (its checksum is {checksum[:19]}…,"
            f" the pick list was made for {pick.stock_checksum[:19]}…); nothing taken. Make the kit or"
            " design again from the file as it is now")
    need = _counts_for_units(pick, units)
    stock = load_stock(str(path))
    by_place = {(line.source.sheet, line.source.row): line for line in stock.lines}
    # A CSV has one unnamed sheet; a pick list may name it None or leave it out.
    changes: list[Change] = []
    short: list[str] = []
    for (sheet, row), n in sorted(need.items(), key=lambda kv: (kv[0][0] or "", kv[0][1])):
        line = by_place.get((sheet, row))
        where = f"{path}{f', sheet {sheet!r}' if sheet else ''}, row {row}"
        if line is None:
            raise TakeError(f"{where}: no stock line there; nothing taken")
        if line.source.qty_column is None:
            raise TakeError(f"{path}: the file has no quantity column, so there is nothing to subtract from;"
                            " add one (see docs/inventory-format.md); nothing taken")
        if n == 0:
            continue
        if line.qty < n:
            short.append(f"{where} ({_describe(line)}): needs {n}, holds {line.qty}")
            continue
        changes.append(Change(sheet, row, line.source.qty_column, line.qty, line.qty - n,
                              _describe(line), line.location))
    if short:
        raise TakeError("not enough stock, nothing taken:\n  " + "\n  ".join(short))
    return TakePlan(str(path), units if units is not None else pick.units, tuple(changes), checksum)


def _describe(line) -> str:
    from ..values import format_si
    from ..parts import UNIT_OF_KIND

    if line.value is None:
        return line.label or line.kind
    return format_si(line.value, UNIT_OF_KIND.get(line.kind))


# --- applying --------------------------------------------------------------------------------


def _read(path: Path) -> bytes:
    try:
        return path.read_bytes()
    except FileNotFoundError:
        raise TakeError(f"{path}: no such stock file") from None
    except OSError as exc:
        raise TakeError(f"{path}: cannot read ({exc.strerror})") from None


def _new_bytes(path: Path, data: bytes, changes: tuple[Change, ...] | list[Change], use_old: bool = False) -> bytes:
    """The stock file's bytes with the changes made, checking each cell still holds what was planned."""
    from .stock_edits import QtyEdit, edit_csv_bytes, edit_xlsx_bytes, is_xlsx, read_csv_qty

    edits = []
    for c in changes:
        before, after = (c.new_qty, c.old_qty) if use_old else (c.old_qty, c.new_qty)
        edits.append((c, before, QtyEdit(c.sheet, c.row, c.column, after)))
    if is_xlsx(str(path)):
        return edit_xlsx_bytes(str(path), [e for _c, _b, e in edits], str(path), before=[b for _c, b, _e in edits],
                               data=data)
    from .tables import sniff_delimiter

    # the loader's own guess first, then whichever delimiter puts the planned quantities in place
    delim = sniff_delimiter(data.decode("utf-8-sig", errors="replace")).encode()
    delim = _delimiter_for(data, changes, delim)
    for c, before, _e in edits:
        held, _text = read_csv_qty(data, delim, c.row, c.column, c.where(str(path)))
        if held != before:
            raise TakeError(f"{c.where(str(path))}: holds {held}, expected {before}; nothing changed")
    return edit_csv_bytes(data, [e for _c, _b, e in edits], delim, str(path))


def _delimiter_for(data: bytes, changes, guess: bytes) -> bytes:
    """The delimiter under which every changed cell reads as the quantity the loader saw."""
    from .stock_edits import read_csv_qty

    for delim in (guess, b",", b";", b"\t"):
        try:
            if all(read_csv_qty(data, delim, c.row, c.column, "")[0] in (c.old_qty, c.new_qty) for c in changes):
                return delim
        except StockError:
            continue
    return guess


def target_of(stock_file: str | os.PathLike) -> Path:
    """The real stock file behind ``stock_file``, if take may replace it (else TakeError)."""
    try:
        return check_replaceable(stock_file, "stock file")
    except FileRefused as exc:
        raise TakeError(str(exc)) from None


def locked(target: Path) -> FileLock:
    """The take lock of a stock file, acquired (TakeError when another take holds it)."""
    lock = FileLock(target)
    try:
        return lock.acquire()
    except FileRefused as exc:
        raise TakeError(str(exc)) from None


def write_backup(target: Path, data: bytes, when: str) -> Path:
    """A copy of the file's bytes beside it, never over an existing file; whole or absent."""
    n = 0
    while True:
        backup = target.with_name(f"{target.name}{BACKUP_TAG}{when}{'' if n == 0 else f'-{n}'}")
        try:
            create_new(backup, data)
            return backup
        except FileExistsError:
            n += 1


def append_log(target: Path, entry: dict) -> None:
    append_line(log_path(target), json.dumps(entry, ensure_ascii=False))


def commit(target: Path, old: bytes, new: bytes, entry: dict, doing: str) -> Path:
    """Back up, log, and switch the stock file to ``new``; returns the backup.

    On any failure before the switch the backup is removed, the entry is marked aborted (or cut
    out of the log when even that cannot be written), and TakeError says the file is unchanged.
    """
    backup = None
    logged = False
    try:
        backup = write_backup(target, old, entry["id"])
        entry["backup"] = backup.name
        append_log(target, entry)
        logged = True
        atomic_write(target, new)
    except BaseException as exc:
        if backup is not None:
            try:
                os.unlink(backup)
            except OSError:
                pass
        if logged:
            try:
                append_log(target, {"id": stamp(), "action": "aborted", "when": stamp(), "take": entry["id"],
                                    "why": f"{type(exc).__name__}: {exc}"})
            except OSError:
                pass  # the file still matches checksum_before, which marks the entry as never landed
        if isinstance(exc, OSError):
            raise TakeError(f"{target}: could not {doing} ({io_message(exc)}); the stock file is unchanged and"
                            " nothing was left behind") from None
        raise
    return backup


def take(pick_file: str | os.PathLike, stock_file: str | os.PathLike, *, units: int | None = None,
         dry_run: bool = False) -> TakeResult:
    """Subtract a pick list from the stock file, or (dry run) only say what would change."""
    return take_picks(read_pick_list(pick_file), stock_file, units=units, dry_run=dry_run)


def take_picks(pick: PickList, stock_file: str | os.PathLike, *, units: int | None = None,
               dry_run: bool = False) -> TakeResult:
    """``take`` of a pick list already read (from a file, or from a design or kit in memory)."""
    target = target_of(stock_file)
    if dry_run:
        plan = plan_take(pick, target, units)
        return TakeResult(plan, None, None, None, dry_run=True)
    lock = locked(target)
    try:
        notes = (lock.note,) if lock.note else ()
        data = _read(target)
        plan = plan_take(pick, target, units, data=data)
        if not plan.changes:
            return TakeResult(plan, None, None, plan.checksum, notes=notes + ("the pick list takes nothing",))
        new = _new_bytes(target, data, plan.changes)
        when = stamp()
        entry = {
            "id": when,
            "action": "take",
            "when": when,
            "from": pick.path,
            "stock_file": target.name,
            "units": plan.units,
            "checksum_before": plan.checksum,
            "checksum_after": file_checksum(new),
            "backup": None,
            "changes": [c.to_dict() for c in plan.changes],
        }
        # The entry goes in before the switch: a crash after it leaves a file that still matches
        # checksum_before, and undo knows such a take never landed.
        backup = commit(target, data, new, entry, "write the new stock file")
        return TakeResult(plan, str(backup), str(log_path(target)), entry["checksum_after"], notes=notes)
    finally:
        lock.release()
