"""Loading a problem: the main file, its includes, the readers.

:class:`Loader` is sans-I/O: it asks a ``read(path) -> str`` function for
files by resolved posix path.  The readers here are the only code that opens
files: :func:`disk_reader` (the user's side, optionally confined to a folder)
and :func:`bundle_reader` (the server's side: the files sent with a problem,
plus an optional axiom library folder it may not leave).

Include resolution: a path is looked up relative to the including file's
folder first, then relative to ``include_root`` (the TPTP axiom library).
A file included a second time contributes nothing new (diamonds are fine);
a file that includes itself, directly or not, is an include cycle.
"""

from __future__ import annotations

import os
import posixpath
import re

from .errors import InputError, LimitError, Span
from .formulas import Problem
from .lexer import MAX_BUNDLE_CHARS, MAX_FILE_CHARS, MAX_INCLUDE_DEPTH, Source, check_size
from .native import NativeParser
from .symbols import SymbolTable
from .tptp import TptpParser

TPTP_ENDINGS = (".p", ".ax", ".tptp", ".fof", ".cnf")
BOM = "\ufeff"        # a byte-order mark some editors put first; not part of the text

_SKIP = re.compile(r"(?:\s+|%[^\n]*|#[^\n]*|/\*.*?\*/)*", re.DOTALL)
_TPTP_START = re.compile(r"(?:fof|cnf|tff|thf|tcf|tpi|tfx|include)\s*\(")
_NATIVE_START = re.compile(r"(?:axiom|hypothesis|conjecture|negated_conjecture)\b|include\s*\"")


def detect_language(text: str, name: str = "") -> str:
    """``"native"`` or ``"tptp"``, from the first statement of the text; the
    file ending decides when the text does not (e.g. only comments)."""
    m = _SKIP.match(text, 1 if text.startswith(BOM) else 0)
    pos = m.end() if m else 0
    if _TPTP_START.match(text, pos):
        return "tptp"
    if _NATIVE_START.match(text, pos):
        return "native"
    low = name.lower()
    if low.endswith(TPTP_ENDINGS):
        return "tptp"
    return "native"


class OutsideError(InputError):
    """A path a reader refuses to open (outside its bundle, folder or library)."""


def _norm(path: str) -> str:
    p = posixpath.normpath(path.replace("\\", "/")) if path else path
    return p


def _escapes(path: str) -> bool:
    return path.startswith("/") or path == ".." or path.startswith("../")


def _inside(path: str, root: str) -> bool:
    root = root.rstrip("/") or "/"
    return path == root or path.startswith(root if root.endswith("/") else root + "/")


class Loader:
    def __init__(self, read, language=None, include_root=None, record=None):
        if language not in (None, "native", "tptp"):
            raise ValueError(f"unknown language {language!r}")
        self.read = read
        self.language = language
        self.include_root = _norm(include_root) if include_root else None
        self.record = record
        self.symbols = SymbolTable()
        self.sources: dict = {}
        self.files: list = []
        self.stack: list = []
        self.loaded: dict = {}
        self.total = 0
        self.main_language = "native"

    # ------------------------------------------------------------ reading

    def _get(self, path: str):
        """text or raise FileNotFoundError / InputError (plain)."""
        try:
            text = self.read(path)
        except FileNotFoundError:
            raise
        except InputError:
            raise
        except IsADirectoryError:
            raise InputError(f"cannot read '{path}': it is a folder, not a file")
        except UnicodeDecodeError as e:
            raise InputError(f"cannot read '{path}': it is not UTF-8 text ({e.reason} "
                             f"at byte {e.start})")
        except OSError as e:
            raise InputError(f"cannot read '{path}': {e.strerror or e}")
        if not isinstance(text, str):
            raise InputError(f"cannot read '{path}': not text")
        return text

    def load(self, main: str | None, context=()) -> Problem:
        """The problem of ``main`` and its includes; then the files named in
        ``context`` (bundle names) are read as if ``main`` ended with an
        include of each, without a line of text being added to ``main``
        (the shared axioms of conjecture files).  ``main`` None: the context
        on its own, as if included by an empty main file at the top."""
        context = [_norm(c) for c in context or ()]
        if main is None:
            statements = self.check_names(self.read_context(context, ""))
            return Problem(statements, self.symbols.signature(), self.files, "",
                           self.main_language)
        main = _norm(main)
        text = self._read_whole(main)
        statements = self.parse_file(main, text, top=True, context=bool(context))
        if context:
            self.stack.append(main)
            try:
                statements = statements + self.read_context(context, main)
            finally:
                self.stack.pop()
        statements = self.check_names(statements)
        if not statements:
            raise InputError("the problem has no statements (its includes are empty)",
                             Span(main, 1, 1))
        return Problem(statements, self.symbols.signature(), self.files, main,
                       self.main_language)

    def _read_whole(self, name: str) -> str:
        """The text of a file read by name, not through an include line (the
        main file, a context file): an error names the file at 1:1."""
        try:
            text = self._get(name)
        except FileNotFoundError:
            raise InputError(f"cannot read '{name}': no such file") from None
        except InputError as e:
            if e.span is not None:
                raise
            raise type(e)(e.message, Span(name, 1, 1), None, e.hint) from None
        if self.record is not None:
            self.record(name, text)
        return text

    def read_context(self, names: list, main: str) -> list:
        """The statements of the context files, in order, each read as an
        include of the whole file would read it (a file already read gives
        its statements again, and check_names drops the repeats).  There is
        no include line to point at: an error reading one names the file."""
        out: list = []
        for name in names:
            if name == main:
                raise InputError(f"'{name}' is the main file and cannot also be "
                                 f"one of its axiom files")
            if name in self.loaded:
                out.extend(self.loaded[name])
                continue
            text = self._read_whole(name)
            stmts = self.parse_file(name, text)
            self.loaded[name] = stmts
            out.extend(stmts)
        return out

    def parse_text(self, name: str, text: str) -> Problem:
        statements = self.check_names(self.parse_file(name, text, top=True))
        return Problem(statements, self.symbols.signature(), self.files, name,
                       self.main_language)

    def parse_file(self, name: str, text: str, top: bool = False,
                   context: bool = False) -> list:
        if text.startswith(BOM):      # every reader's text passes here
            text = text[1:]
        src = Source(name, text)
        check_size(src)
        self.total += len(text)
        if self.total > MAX_BUNDLE_CHARS:
            raise LimitError(f"the problem and its includes are {self.total:,} "
                             f"characters long; the limit is {MAX_BUNDLE_CHARS:,} "
                             f"characters (50 MB) in all", Span(name, 1, 1))
        self.sources[name] = src
        self.files.append(name)
        lang = self.language or detect_language(text, name)
        if top:
            self.main_language = lang
        parser = (NativeParser if lang == "native" else TptpParser)(
            src, self.symbols, self.include)
        parser.forced = self.language is not None
        self.stack.append(name)
        try:
            statements = parser.parse()
        finally:
            self.stack.pop()
        if top and not statements and not parser.includes and not context:
            what = "empty" if not text.strip() else "without statements (only comments)"
            hint = ("write a statement such as: axiom a1: p(x)" if lang == "native"
                    else "write a statement such as: fof(a1, axiom, p(a)).")
            raise InputError(f"the file is {what}: there is nothing to read",
                             Span(name, 1, 1), src.line(1) or "", hint)
        return statements

    def include(self, path: str, src: Source, offset: int, names) -> list:
        if len(self.stack) >= MAX_INCLUDE_DEPTH:
            raise src.error(f"includes are nested too deeply: the limit is "
                            f"{MAX_INCLUDE_DEPTH} levels", offset, cls=LimitError)
        cands = []
        p = _norm(path)
        if p.startswith("/"):
            cands.append(p)
        else:
            cands.append(_norm(posixpath.join(posixpath.dirname(src.name), p)))
            if self.include_root:
                c = _norm(posixpath.join(self.include_root, p))
                if _inside(c, self.include_root):
                    cands.append(c)
        text = None
        found = None
        refusal = None
        for c in cands:
            try:
                text = self._get(c)
                found = c
                break
            except FileNotFoundError:
                continue
            except OutsideError as e:
                if refusal is None:
                    refusal = e
                continue
            except InputError as e:
                if e.span is not None:
                    raise
                raise src.error(e.message, offset, e.hint, type(e)) from None
        if found is None:
            looked = ", ".join(f"'{c}'" for c in cands)
            if refusal is not None:
                raise src.error(refusal.message, offset,
                                f"looked for {looked}; includes may not leave the "
                                f"problem's files or the axiom library", OutsideError)
            hint = ("include paths are relative to the including file" +
                    ("" if self.include_root else
                     "; TPTP axiom libraries are found through --include-root "
                     "or NIGHTJAR_TPTP_ROOT"))
            raise src.error(f"include file '{path}' not found (looked for {looked})",
                            offset, hint)
        if found in self.stack:
            chain = " -> ".join(self.stack[self.stack.index(found):] + [found])
            raise src.error(f"include cycle: {chain}", offset,
                            "remove one of these includes")
        if self.record is not None:
            self.record(cands[0], text)
        if found in self.loaded:
            stmts = self.loaded[found]
        else:
            stmts = self.parse_file(found, text)
            self.loaded[found] = stmts
        if names is not None:
            have = {s.name: s for s in stmts}
            picked = []
            for nm, off in names:
                if nm not in have:
                    raise src.error(f"the included file '{path}' has no statement "
                                    f"named '{nm}'", off)
                picked.append(have[nm])
            stmts = picked
        return stmts

    def check_names(self, statements) -> list:
        """Drop repeats of a statement (a file included twice) and refuse two
        statements with one name; return the statements in order."""
        seen: dict = {}
        out = []
        done = set()
        for s in statements:
            if id(s) in done:
                continue
            done.add(id(s))
            out.append(s)
            first = seen.get(s.name)
            if first is not None:
                src = self.sources.get(s.span.file)
                line_text = src.line(s.span.line) if src is not None else None
                raise InputError(f"duplicate statement name '{s.name}': it already "
                                 f"names the statement at {first.span}",
                                 s.span, line_text,
                                 "statement names are unique in a problem, includes "
                                 "counted")
            seen[s.name] = s
        return out


# -------------------------------------------------------------- readers

def _read_disk(path: str) -> str:
    size = os.stat(path).st_size
    if size > MAX_FILE_CHARS:
        raise LimitError(f"'{path}' is {size:,} bytes long; the limit is "
                         f"{MAX_FILE_CHARS:,} (20 MB) per file")
    with open(path, "rb") as fh:
        data = fh.read()
    if data.startswith(b"\xef\xbb\xbf"):   # a UTF-8 byte-order mark: not text
        data = data[3:]
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as e:
        line = data.count(b"\n", 0, e.start) + 1
        start = data.rfind(b"\n", 0, e.start) + 1
        col = len(data[start:e.start].decode("utf-8", "replace")) + 1
        end = data.find(b"\n", e.start)
        text = data[start:end if end >= 0 else len(data)].decode("utf-8", "replace")
        raise InputError(f"the file is not UTF-8 text: byte 0x{data[e.start]:02x} "
                         f"cannot start or continue a character", Span(path, line, col),
                         text, "save the file as UTF-8") from None


def _confined(path: str, root: str) -> str:
    """The real path of ``path`` if it lies inside ``root`` (symlinks
    resolved), else an InputError."""
    real_root = os.path.realpath(root)
    real = os.path.realpath(path)
    try:
        ok = os.path.commonpath([real_root, real]) == real_root
    except ValueError:
        ok = False
    if not ok:
        raise OutsideError(f"'{path}' lies outside the folder '{root}' and is not read")
    return real


def disk_reader(root: str | None = None):
    """A ``read`` function over the local disk.  With ``root``, only files
    inside that folder (after resolving symlinks) are read."""
    def read(path: str) -> str:
        if root is not None:
            _confined(path, root)
        return _read_disk(path)
    return read


def bundle_reader(files: dict, library: str | None = None):
    """A ``read`` function over a bundle ``{name: text}`` (as made by
    :func:`collect_bundle`) that never touches the disk, except, when
    ``library`` is given, for files inside that axiom library folder."""
    table = {_norm(k): (v[1:] if isinstance(v, str) and v.startswith(BOM) else v)
             for k, v in files.items()}
    lib = _norm(library) if library else None

    def read(path: str) -> str:
        key = _norm(path)
        if key in table:
            return table[key]
        if lib is not None and _inside(key, lib):
            real = _confined(key, lib)
            return _read_disk(real)
        if _escapes(key):
            raise OutsideError(f"'{path}' lies outside the bundle: only the files sent "
                             f"with the problem" + (" and the axiom library" if lib else "")
                             + " can be included")
        raise FileNotFoundError(path)
    return read


def collect_bundle(path: str, include_root: str | None = None,
                   language: str | None = None) -> dict:
    """Read ``path`` and everything it includes from disk; return
    ``{name: text}`` with names relative to the main file's folder (the main
    file first, under its base name).  ``load_problem(name_of_main,
    bundle_reader(bundle))`` then reads the same problem without a disk.
    Files found through ``include_root`` are stored under the name the
    including file asks for first, so the server needs no library for them."""
    folder = os.path.dirname(path)
    main = os.path.basename(path)
    bundle: dict = {}

    def read(name: str) -> str:
        real = name if name.startswith("/") or not folder else os.path.join(folder, name)
        return _read_disk(real)

    def record(name: str, text: str) -> None:
        bundle.setdefault(name, text)

    if include_root is None:
        include_root = os.environ.get("NIGHTJAR_TPTP_ROOT") or None
    if include_root and not os.path.isabs(include_root):
        include_root = os.path.abspath(include_root)
    Loader(read, language, include_root, record).load(main)
    return bundle
