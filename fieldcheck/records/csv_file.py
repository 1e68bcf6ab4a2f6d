"""The one CSV reader for posts: `rate --batch` and `import` read a file through it, alike.

    with open_posts(path, also=("site", ...), ignore_unknown=False) as table:
        table.columns      # column names as the registry spells them (decay_wide), file order
        table.ignored      # headers left out (only with ignore_unknown)
        for row in table:  # dict[str, str] per data row, streamed (no list of the whole file)
            ...
        for chunk in table.chunks(50_000): ...   # lists of rows, for bulk paths

Every line of the file is read by the stdlib csv module (no line is filtered: a tag ``#4`` is a
tag). Comma-, semicolon- and tab-separated files are recognised from the header line. Headers
are matched in any letter case, with ``-`` or ``_`` (``Decay-Wide`` is ``decay_wide``). A header
the registry does not know, a duplicated header, a row with more cells than the header, a cell
over the csv module's field limit and text that is not UTF-8 (Latin-1, UTF-16) are each refused
with one sentence naming the file and the line (``CsvProblem``, a ValueError).
"""

from __future__ import annotations

import csv
import io
from collections.abc import Collection, Iterator
from pathlib import Path

from fieldcheck.records.columns import COLUMNS

DELIMITERS = (",", ";", "\t")
# a cell an export wrote as text for spreadsheets (report.export_format.neutralise: an apostrophe
# before what a spreadsheet would run as a formula) reads back as it was: '-10 C is -10 C
_GUARDED = ("'=", "'+", "'-", "'@", "'\t", "'\r")
_DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab"}
_SAVE_AS = "save the file as CSV UTF-8 (in a spreadsheet: Save As, CSV UTF-8) and try again"


class CsvProblem(ValueError):
    """A file that cannot be read as posts: one sentence naming the file and the line."""


def header_key(text: str) -> str:
    """A header as the registry spells it: any case, ``-`` or ``_``, spaces around ignored."""
    return text.strip().lower().replace("-", "_")


def _short(text: str, limit: int = 40) -> str:
    text = "".join(ch if ch.isprintable() else "?" for ch in text)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _unguard(cell: str) -> str:
    return cell[1:] if cell[:1] == "'" and cell.startswith(_GUARDED) else cell


def _delimiter(header_line: str) -> str:
    counts = {d: header_line.count(d) for d in DELIMITERS}
    best = max(DELIMITERS, key=lambda d: counts[d])  # ties: the comma (first)
    return best if counts[best] else ","


class PostsFile:
    """An open CSV file of posts (see the module docstring). Use as a context manager."""

    def __init__(
        self,
        path: Path | str,
        *,
        also: Collection[str] = (),
        ignore_unknown: bool = False,
        known: Collection[str] | None = None,
    ):
        self.path = Path(path)
        self.name = "standard input" if str(path) == "-" else str(path)
        names = [*(COLUMNS if known is None else known), *also]
        known_map = {header_key(k): k for k in names}  # any spelling -> the canonical name
        try:
            if str(path) == "-":  # standard input: read as a file, never closed under the caller
                import io
                import sys

                raw = open(sys.stdin.fileno(), "rb", closefd=False)  # noqa: SIM115
                self._fh = io.TextIOWrapper(raw, encoding="utf-8-sig", newline="", errors="strict")
            else:
                self._fh = open(self.path, newline="", encoding="utf-8-sig", errors="strict")  # noqa: SIM115
        except IsADirectoryError:
            raise CsvProblem(f"{self.name} is a folder; give a CSV file") from None
        except FileNotFoundError:
            raise CsvProblem(f"{self.name} does not exist; give an existing CSV file") from None
        except OSError as exc:
            raise CsvProblem(f"cannot read {self.name} ({exc.strerror or exc})") from None
        try:
            self._start(known_map, ignore_unknown)
        except BaseException:
            self._fh.close()
            raise

    # ---- the header

    def _start(self, known: dict[str, str], ignore_unknown: bool) -> None:
        head = self._fh.buffer.peek(4096)[:4096] if hasattr(self._fh, "buffer") else b""
        if head.startswith((b"\xff\xfe", b"\xfe\xff")) or b"\x00" in head:
            raise CsvProblem(
                f"{self.name}, line 1: the file is UTF-16 text (or not text at all), which "
                f"fieldcheck does not read; {_SAVE_AS}"
            )
        try:
            first = self._fh.readline()
        except UnicodeDecodeError:
            raise self._not_utf8(self._bad_line()) from None
        self.delimiter = _delimiter(first)
        self.dialect = _DELIMITER_NAMES[self.delimiter]
        text = io.StringIO(first)
        # strict: a quote opened and never closed is an error, not a cell that swallows every
        # line after it (rows of posts silently read as one post's notes)
        self._reader = csv.reader(self._chain(text), delimiter=self.delimiter, strict=True)
        try:
            header = next(self._reader, None)
        except csv.Error as exc:
            raise CsvProblem(f"{self.name}, line 1: the header cannot be read ({exc})") from None
        if not header or not any(h.strip() for h in header):
            raise CsvProblem(
                f"{self.name} has no header line; the first line must name the columns, e.g. "
                "tag,size,height,species,grade,load"
            )
        self._keep: list[tuple[int, str]] = []  # (cell index, column name)
        self.ignored: list[str] = []
        self._ignored_at: list[int] = []  # their cell indices
        self._unnamed: list[int] = []
        seen: dict[str, str] = {}
        unknown: list[str] = []
        for i, raw in enumerate(header):
            key = header_key(raw)
            if not key:
                self._unnamed.append(i)  # a trailing comma: fine while its cells stay empty
                continue
            if key in seen:
                raise CsvProblem(
                    f"{self.name}, line 1: the column {_short(raw)!r} appears twice (also as "
                    f"{_short(seen[key])!r}); keep one of them"
                )
            seen[key] = raw
            if key in known:
                self._keep.append((i, known[key]))
            elif ignore_unknown:
                self.ignored.append(raw.strip())
                self._ignored_at.append(i)
            else:
                unknown.append(raw.strip())
        if unknown:
            names = ", ".join(repr(_short(u)) for u in unknown[:5])
            more = f" and {len(unknown) - 5} more" if len(unknown) > 5 else ""
            raise CsvProblem(
                f"{self.name}, line 1: fieldcheck does not know the column"
                f"{'s' if len(unknown) > 1 else ''} {names}{more}; correct the header (columns "
                "are the options of `fieldcheck rate --help`, e.g. decay_wide or decay-wide) or "
                "pass --ignore-unknown-columns to leave them out"
            )
        self.columns = [k for _, k in self._keep]
        self._width = len(header)

    def _chain(self, first: io.StringIO) -> Iterator[str]:
        yield from first
        yield from self._fh

    def _not_utf8(self, line: int) -> CsvProblem:
        return CsvProblem(
            f"{self.name}, line {line}: the text is not UTF-8 (probably Latin-1 or Windows "
            f"text from a spreadsheet); {_SAVE_AS}"
        )

    def _bad_line(self) -> int:
        """The line holding the first byte that is not UTF-8 (the decoder reads ahead)."""
        import codecs

        dec = codecs.getincrementaldecoder("utf-8")()
        line = 1
        with open(self.path, "rb") as fh:
            while block := fh.read(1 << 16):
                try:
                    dec.decode(block)
                except UnicodeDecodeError as exc:
                    return line + block[: exc.start].count(b"\n")
                line += block.count(b"\n")
        return line

    # ---- the rows

    def __iter__(self) -> Iterator[dict[str, str]]:
        keep = self._keep
        for cells in self._cells():
            n = len(cells)
            yield {k: _unguard(cells[i]) if i < n else "" for i, k in keep}

    def with_ignored(self) -> Iterator[tuple[dict[str, str], list[str]]]:
        """Each row as iterating gives it, with the cells of the ignored columns (``ignored``,
        in their order): what a results file carries through unread."""
        keep, extra = self._keep, self._ignored_at
        for cells in self._cells():
            n = len(cells)
            yield (
                {k: _unguard(cells[i]) if i < n else "" for i, k in keep},
                [cells[i] if i < n else "" for i in extra],
            )

    def records(self, drop: Collection[str] = ()) -> Iterator[dict[str, str]]:
        """The rows as a survey log keeps a record: blank cells (not given) and the columns in
        ``drop`` left out; the same checks as iterating the file."""
        keep = [(i, k) for i, k in self._keep if k not in drop]
        for cells in self._cells():
            n = len(cells)
            yield {  # _unguard written out: a call per cell cost a third of reading the file
                k: c[1:] if c[0] == "'" and c.startswith(_GUARDED) else c
                for i, k in keep
                if i < n and (c := cells[i]).strip()
            }

    def _cells(self) -> Iterator[list[str]]:
        """Each data row's cells, checked (blank lines skipped)."""
        reader = self._reader
        width, unnamed = self._width, self._unnamed
        # a cell running over several lines whose later lines hold this many delimiters holds
        # rows, not text: an opening quote never closed until a later quote
        rowlike = max(2, (width - 1) // 2)
        while True:
            start = reader.line_num + 1  # the line the next row starts on
            try:
                cells = next(reader)
            except StopIteration:
                return
            except UnicodeDecodeError:
                raise self._not_utf8(self._bad_line()) from None
            except csv.Error as exc:
                line = reader.line_num
                if "unexpected end of data" in str(exc) or (
                    "expected after" in str(exc) and line > start
                ):
                    raise CsvProblem(
                        f'{self.name}, line {start}: a quote (") opened in this row is never '
                        f"closed, so every line after it would be read into one cell (to line "
                        f"{line}); close the quote or remove it"
                    ) from None
                if "field larger than field limit" in str(exc):
                    raise CsvProblem(
                        f"{self.name}, line {line}: a cell is longer than "
                        f"{csv.field_size_limit():,} characters (an unclosed quote, or not a "
                        "CSV file of posts); correct that line"
                    ) from None
                raise CsvProblem(
                    f"{self.name}, line {line}: the line cannot be read as CSV ({exc})"
                ) from None
            if not cells or (len(cells) == 1 and not cells[0].strip()):
                continue  # a blank line
            if reader.line_num > start:
                for cell in cells:
                    if "\n" in cell and any(
                        part.count(self.delimiter) >= rowlike for part in cell.splitlines()[1:]
                    ):
                        raise CsvProblem(
                            f"{self.name}, line {start}: a quoted cell runs on to line "
                            f"{reader.line_num} over what look like further rows (a quote "
                            "opened and never closed?); close the quote where the cell ends"
                        )
            if len(cells) > width:
                raise CsvProblem(
                    f"{self.name}, line {reader.line_num}: {len(cells)} cells but the header "
                    f"names {width} columns (a stray {self.dialect} or an unquoted value "
                    f"holding one?); correct that line"
                )
            for i in unnamed:
                if i < len(cells) and cells[i].strip():
                    raise CsvProblem(
                        f"{self.name}, line {reader.line_num}: a value "
                        f"{_short(cells[i])!r} sits under a column with no header; name the "
                        "column or move the value"
                    )
            yield cells

    def chunks(self, size: int) -> Iterator[list[dict[str, str]]]:
        chunk: list[dict[str, str]] = []
        for row in self:
            chunk.append(row)
            if len(chunk) >= size:
                yield chunk
                chunk = []
        if chunk:
            yield chunk

    def close(self) -> None:
        self._fh.close()

    def __enter__(self) -> PostsFile:
        return self

    def __exit__(self, *exc) -> None:
        self.close()


def open_posts(
    path: Path | str, *, also: Collection[str] = (), ignore_unknown: bool = False
) -> PostsFile:
    """Open a CSV file of posts; the registry's columns and ``also`` are known (see module)."""
    return PostsFile(path, also=also, ignore_unknown=ignore_unknown)
