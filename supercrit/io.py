"""Files in and out: safe YAML reading that keeps file, line and column of every key and value;
atomic writing; safe output file names.

Reading
-------
:func:`load_yaml` / :func:`load_yaml_file` parse YAML with PyYAML's safe parser (libyaml when
present) down to nodes only, then build plain Python values themselves:

* mappings become :class:`YamlMap` (a ``dict`` with ``where``, ``key_where`` and ``value_where``
  holding :class:`Location` s), sequences :class:`YamlList` (a ``list`` with ``where`` and
  ``item_where``); scalars are ``str``, ``int``, ``float``, ``bool`` or ``None``;
* no object is ever constructed: any tag other than the plain YAML ones (``!!str``, ``!!int``,
  ``!!float``, ``!!bool``, ``!!null``, ``!!map``, ``!!seq``) — e.g. ``!!python/object`` — is an
  error naming its line;
* plain scalars follow the YAML 1.2 core schema, not YAML 1.1: only ``true``/``false`` are
  booleans (``yes``, ``no``, ``on``, ``off`` stay text), ``1e6`` is a number, ``1:20`` and
  ``2024-01-01`` stay text, ``.inf``/``.nan`` stay text (and are refused wherever a number is needed);
* duplicate keys and merge keys (``<<``) are errors;
* size limits against "YAML bombs": :data:`MAX_BYTES` per file, :data:`MAX_NODES` values after
  alias expansion, :data:`MAX_DEPTH` nesting levels, :data:`MAX_SCALAR_CHARS` per scalar; an
  alias that contains itself is refused.

Every failure raises :class:`YamlError` (an :class:`~supercrit.errors.InputError`) whose
``location`` says file, line and column.
"""
from __future__ import annotations

import hashlib
import os
import re
import tempfile
import unicodedata
from dataclasses import dataclass
from pathlib import Path

import yaml

from .errors import InputError

MAX_BYTES = 2_000_000  # [bytes] per YAML file; a scenario is a few kB
MAX_NODES = 50_000  # values after alias expansion; a large scenario has a few thousand
MAX_DEPTH = 64  # nesting levels of mappings/lists
MAX_SCALAR_CHARS = 100_000  # characters in one scalar

_PLAIN_TAGS = {f"tag:yaml.org,2002:{t}" for t in ("str", "int", "float", "bool", "null", "map", "seq")}


@dataclass(frozen=True)
class Location:
    """A place in a file: ``file``, 1-based ``line`` and ``col``; ``str()`` gives ``file:line:col``."""

    file: str
    line: int
    col: int

    def __str__(self) -> str:
        return f"{self.file}:{self.line}:{self.col}"


class YamlError(InputError):
    """A YAML file that cannot be read as plain data; ``location`` is where (file, line, column)."""

    def __init__(self, message: str, location: Location):
        self.location = location
        super().__init__(message, str(location))


class YamlMap(dict):
    """A YAML mapping: a ``dict`` that knows where it, each key and each value were written.

    Attributes
    ----------
    where : Location
        Start of the mapping.
    key_where, value_where : dict of str to Location
        Start of each key and of each value.
    """

    def __init__(self, where: Location):
        super().__init__()
        self.where = where
        self.key_where: dict[str, Location] = {}
        self.value_where: dict[str, Location] = {}

    def loc(self, key: str) -> Location:
        """Location of the value of ``key`` if present, else of the mapping."""
        return self.value_where.get(key, self.where)


class YamlList(list):
    """A YAML sequence: a ``list`` with ``where`` (its start) and ``item_where`` (start of each item)."""

    def __init__(self, where: Location):
        super().__init__()
        self.where = where
        self.item_where: list[Location] = []

    def loc(self, i: int) -> Location:
        """Location of item ``i`` if present, else of the list."""
        return self.item_where[i] if 0 <= i < len(self.item_where) else self.where


@dataclass(frozen=True)
class YamlDocument:
    """A parsed YAML file: ``data`` (YamlMap/YamlList/scalar/None), ``file`` name, ``sha256`` of its bytes."""

    data: object
    file: str
    sha256: str


_Base = getattr(yaml, "CSafeLoader", yaml.SafeLoader)  # libyaml parser when built in, same results


class _NodeLoader(_Base):
    """Safe parser used only to compose nodes; YAML 1.2 core-schema resolution of plain scalars."""

    yaml_implicit_resolvers: dict = {}


_NodeLoader.add_implicit_resolver("tag:yaml.org,2002:bool", re.compile(r"^(?:true|True|TRUE|false|False|FALSE)$"),
                                  list("tTfF"))
_NodeLoader.add_implicit_resolver("tag:yaml.org,2002:int", re.compile(r"^[-+]?[0-9]+$"), list("-+0123456789"))
_NodeLoader.add_implicit_resolver(
    "tag:yaml.org,2002:float",
    re.compile(r"^[-+]?(?:[0-9]+\.[0-9]*|\.[0-9]+)(?:[eE][-+]?[0-9]+)?$|^[-+]?[0-9]+[eE][-+]?[0-9]+$"),
    list("-+0123456789."))
_NodeLoader.add_implicit_resolver("tag:yaml.org,2002:null", re.compile(r"^(?:~|null|Null|NULL|)$"),
                                  ["~", "n", "N", ""])

_HINTS = (  # (fragment of the parser's problem, plain words added)
    ("found a tab character", "YAML indents with spaces, never tabs: replace the tab characters by spaces"),
    ("mapping values are not allowed", "a ':' inside a value, or a key indented wrongly: put text containing "
                                       "': ' in quotes, and check the indentation of this line"),
    ("could not find expected ':'", "a key without ':' or a line indented wrongly: write 'key: value'"),
    ("did not find expected key", "the indentation does not line up with the keys above, or a list item "
                                  "'- ' is mixed into a mapping"),
    ("did not find expected '-' indicator", "list items ('- ...') do not line up"),
    ("found undefined alias", "an alias '*name' needs an anchor '&name' earlier in the file"),
    ("expected a single document", "the file holds more than one YAML document ('---'); keep one"),
    ("found unexpected end of stream", "a quote or bracket is not closed"),
    ("while scanning a quoted scalar", "a quote is not closed"),
    ("found duplicate anchor", "each anchor '&name' may be defined once"),
    ("expected ',' or ']'", "a '[...]' list is not closed or lacks a comma"),
    ("expected ',' or '}'", "a '{...}' mapping is not closed or lacks a comma"),
    ("found unknown escape character", "inside double quotes a backslash starts an escape; use single quotes"),
)


def _location(mark, file: str) -> Location:
    return Location(file, mark.line + 1, mark.column + 1)


def _syntax_error(exc: yaml.YAMLError, file: str, text: str) -> YamlError:
    problem = getattr(exc, "problem", None) or str(exc)
    mark = getattr(exc, "problem_mark", None) or getattr(exc, "context_mark", None)
    if mark is not None and "\t" in (text.splitlines()[mark.line:mark.line + 1] or [""])[0]:
        problem = problem.replace("found character", "found a tab character")
    if mark is None and isinstance(exc, yaml.reader.ReaderError):  # non-printable character
        text = f"the file contains a character YAML does not allow ({exc.reason}, code {exc.character!r})"
        return YamlError(f"YAML: {text}", Location(file, 1, 1))
    loc = _location(mark, file) if mark is not None else Location(file, 1, 1)
    words = f"YAML syntax: {problem}"
    context, cmark = getattr(exc, "context", None), getattr(exc, "context_mark", None)
    if context and cmark is not None and cmark is not mark:
        words += f" ({context} at line {cmark.line + 1})"
    for fragment, hint in _HINTS:
        if fragment in words:
            words += f". {hint[0].upper()}{hint[1:]}."
            break
    return YamlError(words, loc)


class _Builder:
    """Turns a node graph into YamlMap/YamlList/scalars, counting and guarding as it goes."""

    def __init__(self, file: str):
        self.file = file
        self.count = 0
        self.active: set[int] = set()

    def build(self, node, depth: int = 0):
        loc = _location(node.start_mark, self.file)
        self.count += 1
        if self.count > MAX_NODES:
            raise YamlError(f"the document expands to more than {MAX_NODES} values (aliases '*name' repeated "
                            f"inside each other?); supercrit stops here to protect the machine", loc)
        if depth > MAX_DEPTH:
            raise YamlError(f"nesting deeper than {MAX_DEPTH} levels; a scenario needs a handful", loc)
        tag = node.tag
        if tag not in _PLAIN_TAGS:
            what = "build a Python object" if "python" in tag else "build a value of a special type"
            raise YamlError(f"the tag {_short_tag(tag)!r} asks YAML to {what}; supercrit reads only plain "
                            f"values (text, numbers, true/false, lists, mappings) and builds no objects from "
                            f"files. Remove the tag", loc)
        if isinstance(node, yaml.ScalarNode):
            return self._scalar(node, loc)
        if id(node) in self.active:
            raise YamlError("an alias '*name' refers to a mapping or list that contains the alias itself; "
                            "such a recursive value has no end", loc)
        self.active.add(id(node))
        try:
            if isinstance(node, yaml.SequenceNode):
                out = YamlList(loc)
                for item in node.value:
                    out.item_where.append(_location(item.start_mark, self.file))
                    out.append(self.build(item, depth + 1))
                return out
            out = YamlMap(loc)
            for knode, vnode in node.value:
                kloc = _location(knode.start_mark, self.file)
                if not isinstance(knode, yaml.ScalarNode):
                    raise YamlError("a key must be a plain word or text, not a list or mapping", kloc)
                if knode.tag not in _PLAIN_TAGS:
                    self.build(knode, depth + 1)  # raises the tag error
                key = knode.value
                if knode.tag == "tag:yaml.org,2002:merge" or key == "<<":
                    raise YamlError("merge keys '<<: *name' are not supported; write the keys out (routes can "
                                    "reuse each other with based_on)", kloc)
                if key in out:
                    first = out.key_where[key]
                    raise YamlError(f"the key {key!r} appears twice in this mapping (first at line {first.line}); "
                                    f"keep one", kloc)
                out.key_where[key] = kloc
                out.value_where[key] = _location(vnode.start_mark, self.file)
                out[key] = self.build(vnode, depth + 1)
            return out
        finally:
            self.active.discard(id(node))

    def _scalar(self, node, loc: Location):
        value, tag = node.value, node.tag
        if len(value) > MAX_SCALAR_CHARS:
            raise YamlError(f"a single value of {len(value)} characters (limit {MAX_SCALAR_CHARS})", loc)
        kind = tag.rsplit(":", 1)[-1]
        try:
            if kind == "null":
                if value not in ("", "~", "null", "Null", "NULL"):
                    raise ValueError
                return None
            if kind == "bool":
                if value.lower() not in ("true", "false"):
                    raise ValueError
                return value.lower() == "true"
            if kind == "int":
                return int(value)
            if kind == "float":
                return float(value)
        except ValueError:
            raise YamlError(f"{value!r} cannot be read as {kind}", loc) from None
        return value


def _short_tag(tag: str) -> str:
    return "!!" + tag[len("tag:yaml.org,2002:"):] if tag.startswith("tag:yaml.org,2002:") else tag


def _decode(data: bytes, file: str) -> str:
    if len(data) > MAX_BYTES:
        raise YamlError(f"the file has {len(data)} bytes; supercrit reads YAML files up to {MAX_BYTES} bytes",
                        Location(file, 1, 1))
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        col = exc.start - (data.rfind(b"\n", 0, exc.start) + 1) + 1
        raise YamlError(f"the file is not UTF-8 text (byte 0x{data[exc.start]:02x}); save it as UTF-8",
                        Location(file, line, col)) from None


def load_yaml(text: str | bytes, file: str = "<text>"):
    """Parse YAML text into YamlMap/YamlList/scalars with locations (see module notes).

    Parameters
    ----------
    text : str or bytes
        The YAML document (bytes are decoded as UTF-8).
    file : str
        Name used in locations and messages.

    Returns
    -------
    YamlMap or YamlList or str or int or float or bool or None
        ``None`` for an empty document.

    Raises
    ------
    YamlError
        Syntax errors (with the parser's problem in plain words), tags that would build objects,
        duplicate or merge keys, size limits exceeded, text that is not UTF-8.
    """
    if isinstance(text, bytes):
        text = _decode(text, file)
    elif len(text) > MAX_BYTES:
        raise YamlError(f"the text has {len(text)} characters; supercrit reads YAML up to {MAX_BYTES}",
                        Location(file, 1, 1))
    try:
        node = yaml.compose(text, Loader=_NodeLoader)
    except yaml.YAMLError as exc:
        raise _syntax_error(exc, file, text) from None
    if node is None:
        return None
    return _Builder(file).build(node)


def load_yaml_file(path: str | os.PathLike) -> YamlDocument:
    """Read and parse a YAML file; also returns the sha256 of its bytes.

    Raises
    ------
    YamlError
        The file cannot be read, or any reason of :func:`load_yaml`.
    """
    file = str(path)
    try:
        data = Path(path).read_bytes()
    except FileNotFoundError:
        raise YamlError("no such file; check the path", Location(file, 1, 1)) from None
    except IsADirectoryError:
        raise YamlError("this is a directory, not a YAML file", Location(file, 1, 1)) from None
    except OSError as exc:
        raise YamlError(f"cannot read the file: {exc.strerror}", Location(file, 1, 1)) from None
    sha = hashlib.sha256(data).hexdigest()
    return YamlDocument(load_yaml(data, file), file, sha)


def write_atomic(path: str | os.PathLike, data: bytes | str) -> Path:
    """Write a file whole or not at all: temp file in the same directory, fsync, ``os.replace``.

    Parameters
    ----------
    path : str or path-like
        Destination; its directory is created if missing. An existing file is replaced.
    data : bytes or str
        Content; text is written as UTF-8.

    Returns
    -------
    pathlib.Path
        The destination path.

    Raises
    ------
    OSError
        If the directory cannot be created or written; no partial file is left behind.
    """
    dest = Path(path)
    dest.parent.mkdir(parents=True, exist_ok=True)
    payload = data.encode("utf-8") if isinstance(data, str) else bytes(data)
    fd, tmp = tempfile.mkstemp(prefix=f".{dest.name}.", suffix=".tmp", dir=dest.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(payload)
            fh.flush()
            os.fsync(fh.fileno())
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, dest)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
    try:  # make the rename itself durable where the platform allows it
        dfd = os.open(dest.parent, os.O_RDONLY)
        try:
            os.fsync(dfd)
        finally:
            os.close(dfd)
    except OSError:
        pass
    return dest


_RESERVED = {"con", "prn", "aux", "nul", *(f"com{i}" for i in range(1, 10)), *(f"lpt{i}" for i in range(1, 10))}


def sanitize_name(name: str, max_len: int = 64) -> str:
    """A safe file-name stem from a scenario or route name.

    Keeps ASCII letters, digits, ``.``, ``_`` and ``-``; everything else (path separators, spaces,
    control characters) becomes ``-``; accents are dropped; no leading dot or dash, so no hidden
    files, ``..`` or option-like names; Windows device names get a ``_`` suffix; empty results
    become ``"scenario"``. Longer than ``max_len`` (>= 16): cut and suffixed with 8 hex digits of
    the name's sha256 so that distinct long names stay distinct.

    Examples
    --------
    >>> sanitize_name("../../etc/passwd")
    'etc-passwd'
    >>> sanitize_name("CO2 extraction: 300 bar / 45 °C")
    'CO2-extraction-300-bar-45-C'
    """
    if max_len < 16:
        raise ValueError("max_len must be at least 16")
    text = unicodedata.normalize("NFKD", str(name)).encode("ascii", "ignore").decode("ascii")
    text = re.sub(r"[^A-Za-z0-9._-]+", "-", text)
    text = re.sub(r"\.{2,}", ".", text)
    text = re.sub(r"-{2,}", "-", text).strip(".-_ ")
    text = text or "scenario"
    if text.split(".")[0].lower() in _RESERVED:
        text += "_"
    if len(text) > max_len:
        digest = hashlib.sha256(str(name).encode("utf-8")).hexdigest()[:8]
        text = text[: max_len - 9].rstrip(".-_") + "-" + digest
    return text
