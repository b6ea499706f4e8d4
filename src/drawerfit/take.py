"""Take the parts of a design or kit out of the stock file, safely, and put them back on request.

The stock file is the user's own record, so a take changes nothing but the quantity cells of the
lines it uses, and only after every check has passed:

1. a lock file beside the stock file (created with O_EXCL) keeps two takes apart;
2. the file's checksum must equal the one recorded in the design or kit;
3. every line must hold what the pick list asks of it;
4. a timestamped copy of the file is written beside it before anything changes;
5. an entry goes to the log beside the file (``<name>.takes.jsonl``) before the switch, with the
   checksums before and after, the backup's name and every cell changed;
6. the new file is written to a temporary file in the same folder, flushed to disk, then put in
   place with os.replace, which is atomic on one file system.

``undo`` reverses the last take that reached the file: it checks that the file is byte for byte
what that take left, then puts the backup back (or, if the backup is gone, writes the old cells).
"""

from __future__ import annotations

import datetime as _dt
import json
import os
import shutil
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

from .parts import StockError
from .stock.readers import file_checksum  # the same checksum the loader records in Stock.checksum

__all__ = ["PickEntry", "TakePlan", "Change", "TakeResult", "read_pick_list", "plan_take", "take",
           "undo", "log_path", "lock_path", "file_checksum", "pick_entries"]

LOG_SUFFIX = ".takes.jsonl"
LOCK_SUFFIX = ".take-lock"
BACKUP_TAG = ".backup-"


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


def log_path(stock_file: str | os.PathLike) -> Path:
    p = Path(stock_file)
    return p.with_name(p.name + LOG_SUFFIX)


def lock_path(stock_file: str | os.PathLike) -> Path:
    p = Path(stock_file)
    return p.with_name(p.name + LOCK_SUFFIX)


# --- reading a pick list ---------------------------------------------------------------------


def read_pick_list(path: str | os.PathLike) -> PickList:
    """The pick list of a saved design (TOML) or kit (JSON)."""
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise TakeError(f"{p}: cannot read ({exc.strerror})") from None
    if p.suffix.lower() == ".toml":
        import tomllib

        try:
            doc = tomllib.loads(raw.decode("utf-8-sig"))
        except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
            raise TakeError(f"{p}: not a readable TOML file ({exc})") from None
    else:
        try:
            doc = json.loads(raw.decode("utf-8-sig"))
        except (json.JSONDecodeError, UnicodeDecodeError) as exc:
            raise TakeError(f"{p}: not a readable JSON file ({exc})") from None
    if not isinstance(doc, dict):
        raise TakeError(f"{p}: expected a table with 'units', 'stock_checksum' and 'pick_list'")
    for key in ("units", "stock_checksum", "pick_list"):
        if key not in doc:
            raise TakeError(f"{p}: no {key!r} in the file; save the design or kit again with this version")
    units = doc["units"]
    if isinstance(units, bool) or not isinstance(units, int) or units < 1:
        raise TakeError(f"{p}: 'units' must be a whole number of at least 1, not {units!r}")
    if not isinstance(doc["pick_list"], list):
        raise TakeError(f"{p}: 'pick_list' must be a list of entries")
    entries = pick_entries(doc["pick_list"], units, str(p))
    return PickList(str(p), units, str(doc["stock_checksum"]), entries)


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
        except (KeyError, TypeError, AttributeError):
            raise TakeError(f"{where}: needs 'source' (with 'row'), 'count' and 'per_unit'") from None
        if isinstance(row, bool) or not isinstance(row, int) or row < 1:
            raise TakeError(f"{where}: 'row' must be a row number, not {row!r}")
        if isinstance(count, bool) or not isinstance(count, int) or count < 0:
            raise TakeError(f"{where}: 'count' must be a whole number of parts, not {count!r}")
        if isinstance(per_unit, bool) or not isinstance(per_unit, (int, float)) or per_unit < 0:
            raise TakeError(f"{where}: 'per_unit' must be a number, not {per_unit!r}")
        sheet = src.get("sheet") or None  # TOML has no null: a CSV's sheet may be written "" or left out
        entries.append(PickEntry(sheet=sheet, row=row, per_unit=float(per_unit), count=count,
                                 part=str(e.get("part", "")), location=str(e.get("location", "")),
                                 file=str(src.get("file", ""))))
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
    from .stock import load_stock

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
    from .values import format_si
    from .parts import UNIT_OF_KIND

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
    from .stock.writeback import QtyEdit, edit_csv_bytes, edit_xlsx_bytes, is_xlsx, read_csv_qty

    edits = []
    for c in changes:
        before, after = (c.new_qty, c.old_qty) if use_old else (c.old_qty, c.new_qty)
        edits.append((c, before, QtyEdit(c.sheet, c.row, c.column, after)))
    if is_xlsx(str(path)):
        return edit_xlsx_bytes(str(path), [e for _c, _b, e in edits], str(path), before=[b for _c, b, _e in edits],
                               data=data)
    from .stock.readers import sniff_delimiter

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
    from .stock.writeback import read_csv_qty

    for delim in (guess, b",", b";", b"\t"):
        try:
            if all(read_csv_qty(data, delim, c.row, c.column, "")[0] in (c.old_qty, c.new_qty) for c in changes):
                return delim
        except StockError:
            continue
    return guess


def _atomic_write(path: Path, data: bytes) -> None:
    """Write ``data`` over ``path`` all at once: temp file in the same folder, fsync, os.replace."""
    folder = path.parent
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "wb") as f:
            f.write(data)
            f.flush()
            os.fsync(f.fileno())
        try:
            shutil.copymode(path, tmp)
        except OSError:
            pass
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    _fsync_dir(folder)


def _fsync_dir(folder: Path) -> None:
    try:
        dfd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dfd)
    except OSError:
        pass
    finally:
        os.close(dfd)


def _stamp() -> str:
    return _dt.datetime.now(_dt.timezone.utc).strftime("%Y%m%dT%H%M%S.%fZ")


def _write_backup(path: Path, data: bytes, stamp: str) -> Path:
    """A copy of the file's bytes beside it, never over an existing file."""
    n = 0
    while True:
        name = f"{path.name}{BACKUP_TAG}{stamp}{'' if n == 0 else f'-{n}'}"
        backup = path.with_name(name)
        try:
            fd = os.open(backup, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o644)
        except FileExistsError:
            n += 1
            continue
        with os.fdopen(fd, "wb") as f:
            f.write(data)
            f.flush()
            os.fsync(f.fileno())
        _fsync_dir(path.parent)
        return backup


def _append_log(path: Path, entry: dict) -> None:
    log = log_path(path)
    with open(log, "a", encoding="utf-8", newline="\n") as f:
        f.write(json.dumps(entry, ensure_ascii=False) + "\n")
        f.flush()
        os.fsync(f.fileno())


def read_log(stock_file: str | os.PathLike) -> list[dict]:
    log = log_path(stock_file)
    if not log.exists():
        return []
    entries = []
    for n, text in enumerate(log.read_text(encoding="utf-8").splitlines(), start=1):
        if not text.strip():
            continue
        try:
            entries.append(json.loads(text))
        except json.JSONDecodeError:
            raise TakeError(f"{log}, line {n}: the log of takes is damaged; fix or remove that line") from None
    return entries


class _Lock:
    """A lock file beside the stock file, created with O_EXCL: one take at a time."""

    def __init__(self, stock_file: Path):
        self.path = lock_path(stock_file)
        self.held = False

    def __enter__(self):
        try:
            fd = os.open(self.path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o644)
        except FileExistsError:
            holder = ""
            try:
                holder = self.path.read_text(encoding="utf-8").strip()
            except OSError:
                pass
            gone = ""
            try:
                pid = int(holder.split()[1]) if holder.startswith("pid ") else None
                if pid is not None:
                    os.kill(pid, 0)
            except ProcessLookupError:
                gone = f" The process that took it (pid {pid}) is no longer running on this machine."
            except (ValueError, IndexError, PermissionError, OSError):
                pass
            raise TakeError(
                f"{self.path}: another take holds the lock ({holder or 'no details'}); nothing changed.{gone} If no"
                " take is running (one was killed), delete that lock file and try again") from None
        with os.fdopen(fd, "w", encoding="utf-8") as f:
            f.write(f"pid {os.getpid()} since {_stamp()}\n")
        self.held = True
        return self

    def __exit__(self, *exc):
        if self.held:
            try:
                os.unlink(self.path)
            except OSError:
                pass
            self.held = False
        return False


def take(pick_file: str | os.PathLike, stock_file: str | os.PathLike, *, units: int | None = None,
         dry_run: bool = False) -> TakeResult:
    """Subtract a pick list from the stock file, or (dry run) only say what would change."""
    path = Path(stock_file)
    pick = read_pick_list(pick_file)
    if dry_run:
        plan = plan_take(pick, path, units)
        return TakeResult(plan, None, None, None, dry_run=True)
    with _Lock(path):
        data = _read(path)
        plan = plan_take(pick, path, units, data=data)
        if not plan.changes:
            return TakeResult(plan, None, None, plan.checksum, notes=("the pick list takes nothing",))
        new = _new_bytes(path, data, plan.changes)
        stamp = _stamp()
        backup = _write_backup(path, data, stamp)
        entry = {
            "id": stamp,
            "action": "take",
            "when": stamp,
            "from": str(pick_file),
            "stock_file": path.name,
            "units": plan.units,
            "checksum_before": plan.checksum,
            "checksum_after": file_checksum(new),
            "backup": backup.name,
            "changes": [c.to_dict() for c in plan.changes],
        }
        # The entry goes in before the switch: a crash after it leaves a file that still matches
        # checksum_before, and undo knows such a take never landed.
        _append_log(path, entry)
        try:
            _atomic_write(path, new)
        except BaseException as exc:
            _append_log(path, {"id": _stamp(), "action": "aborted", "when": _stamp(), "take": stamp,
                               "why": f"{type(exc).__name__}: {exc}"})
            if isinstance(exc, OSError):
                raise TakeError(f"{path}: could not write the new file ({exc}); the file is unchanged"
                                f" and a copy is in {backup.name}") from None
            raise
        return TakeResult(plan, str(backup), str(log_path(path)), entry["checksum_after"])


def undo(stock_file: str | os.PathLike, *, dry_run: bool = False) -> TakeResult:
    """Reverse the last take that reached the stock file, if the file is exactly what it left."""
    path = Path(stock_file)
    with _Lock(path) if not dry_run else _NoLock():
        entries = read_log(path)
        finished = {e.get("take") for e in entries if e.get("action") in ("undo", "aborted")}
        takes = [e for e in entries if e.get("action") == "take" and e.get("id") not in finished]
        data = _read(path)
        current = file_checksum(data)
        notes = []
        while takes and takes[-1].get("checksum_before") == current and takes[-1].get("checksum_after") != current:
            t = takes.pop()  # logged but never reached the file (interrupted before the switch)
            notes.append(f"the take of {t['when']} never reached the file; skipped")
            if not dry_run:
                _append_log(path, {"id": _stamp(), "action": "aborted", "when": _stamp(), "take": t["id"],
                                   "why": "found at undo: the file still matched its checksum before"})
        if not takes:
            raise TakeError(f"{log_path(path)}: no take to undo for {path}")
        t = takes[-1]
        if t.get("checksum_after") != current:
            raise TakeError(
                f"{path}: the file is not what the take of {t['when']} left (it was edited since), so undo"
                f" would lose those edits; nothing changed. The file as it was before that take is in"
                f" {t.get('backup')}")
        changes = tuple(Change(c["sheet"], c["row"], c["column"], c["old_qty"], c["new_qty"], c.get("part", ""),
                               c.get("location", "")) for c in t["changes"])
        backup_bytes = None
        bpath = path.with_name(t["backup"]) if t.get("backup") else None
        if bpath is not None and bpath.exists():
            b = bpath.read_bytes()
            if file_checksum(b) == t.get("checksum_before"):
                backup_bytes = b
        if backup_bytes is None:
            # backup gone or altered: write the old quantities back into the cells
            backup_bytes = _new_bytes(path, data, changes, use_old=True)
            if not path.suffix.lower().startswith(".xls") and file_checksum(backup_bytes) != t.get("checksum_before"):
                raise TakeError(f"{path}: cannot rebuild the file as it was before the take of {t['when']}; nothing changed")
            notes.append("the backup was missing or altered; the old quantities were written back instead")
        plan = TakePlan(str(path), int(t.get("units", 0)), changes, current)
        if dry_run:
            return TakeResult(plan, None, None, None, dry_run=True, undone=t["id"], notes=tuple(notes))
        stamp = _stamp()
        backup = _write_backup(path, data, stamp)
        entry = {"id": stamp, "action": "undo", "when": stamp, "take": t["id"], "stock_file": path.name,
                 "checksum_before": current, "checksum_after": file_checksum(backup_bytes),
                 "backup": backup.name}
        _atomic_write(path, backup_bytes)
        _append_log(path, entry)
        return TakeResult(plan, str(backup), str(log_path(path)), entry["checksum_after"], undone=t["id"],
                          notes=tuple(notes))


class _NoLock:
    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return False


def format_result(result: TakeResult) -> str:
    """What a take or undo did (or would do), for people."""
    plan = result.plan
    lines = []
    if result.undone is not None:
        head = "would put back" if result.dry_run else "put back"
        lines.append(f"{head} the take {result.undone} on {plan.stock_file}:")
        for c in plan.changes:
            lines.append(f"  {c.where(Path(plan.stock_file).name)}  {c.part:>10}  {c.location or '-':<8}"
                         f"  {c.new_qty} -> {c.old_qty}")
    else:
        head = "would take" if result.dry_run else "took"
        lines.append(f"{head} parts for {plan.units} unit(s) from {plan.stock_file}:")
        for c in plan.changes:
            lines.append(f"  {c.where(Path(plan.stock_file).name)}  {c.part:>10}  {c.location or '-':<8}"
                         f"  {c.old_qty} -> {c.new_qty}  (-{c.old_qty - c.new_qty})")
    lines.extend(f"note: {n}" for n in result.notes)
    if result.dry_run:
        lines.append("dry run: the stock file was not changed")
    else:
        if result.backup:
            lines.append(f"backup: {Path(result.backup).name}")
        if result.log:
            lines.append(f"logged in: {Path(result.log).name}")
    return "\n".join(lines)
