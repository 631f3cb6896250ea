"""Safe YAML reading that remembers where every value came from.

Files are composed into PyYAML's node graph with the safe loader and then
converted by our own code, so that

- only the plain YAML types are accepted (any other tag, such as the ones that
  build Python objects, is refused with its line);
- every mapping and list keeps the line of each of its entries, for messages;
- mapping keys stay exactly as written (``on:`` is the text ``on``, not a boolean);
- aliases are expanded under a node budget, so an alias bomb is refused quickly;
- oversized and too deeply nested files give a message, not a crash.
"""

from __future__ import annotations

import os

import yaml

from .errors import InputError

#: Largest design or stock file read.
MAX_FILE_BYTES = 1_000_000
#: Most values a file may expand to once aliases are followed.
MAX_EXPANDED_NODES = 200_000
#: Deepest nesting of mappings and lists.
MAX_NESTING = 50

_PLAIN_TAGS = {
    "tag:yaml.org,2002:" + name
    for name in ("str", "int", "float", "bool", "null", "map", "seq")
}

_TIMESTAMP_TAG = "tag:yaml.org,2002:timestamp"


class Mapping(dict):
    """A YAML mapping: a dict whose keys are the key texts, plus lines.

    ``line`` is the mapping's first line; ``lines[key]`` the line of each key;
    ``raw[key]`` the value's text as written when the value is a scalar.
    """

    line: int
    lines: dict
    raw: dict

    @classmethod
    def at(cls, line: int, entries: dict | None = None) -> "Mapping":
        """A mapping starting on ``line`` whose ``entries`` all stand on that line too."""
        mapping = cls(entries or {})
        mapping.line, mapping.lines, mapping.raw = line, {key: line for key in mapping}, {}
        return mapping


class Sequence(list):
    """A YAML list plus the line of the list and of each item."""

    line: int
    lines: list


class YamlFile:
    """A parsed file: ``data`` (the top-level value) and ``path``."""

    def __init__(self, path: str, data):
        self.path = path
        self.data = data

    def error(self, line: int, message: str) -> InputError:
        return InputError(self.path, line, message)


def read_yaml(path: str) -> YamlFile:
    """Read ``path`` as YAML under the limits above; raise InputError on any problem."""
    shown = str(path)
    try:
        size = os.path.getsize(path)
    except OSError as problem:
        raise InputError(shown, 0, f"cannot read the file: {problem.strerror or problem}") from None
    if size > MAX_FILE_BYTES:
        raise InputError(
            shown, 1, f"file is {size} bytes; the limit is {MAX_FILE_BYTES} bytes for a design or stock file")
    try:
        with open(path, "rb") as handle:
            text = handle.read().decode("utf-8")
    except UnicodeDecodeError as problem:
        raise InputError(shown, 1, f"file is not UTF-8 text ({problem.reason} at byte {problem.start})") from None
    except OSError as problem:
        raise InputError(shown, 0, f"cannot read the file: {problem.strerror or problem}") from None
    return parse_yaml_text(text, shown)


def parse_yaml_text(text: str, path: str) -> YamlFile:
    """Parse YAML ``text`` (named ``path`` in messages) into a YamlFile."""
    try:
        loader = yaml.SafeLoader(text)
        root = loader.get_single_node()
    except yaml.reader.ReaderError as problem:
        line = text.count("\n", 0, max(problem.position, 0)) + 1
        raise InputError(path, line, f"not valid YAML: character U+{problem.character:04X} is not allowed "
                                     "in a YAML file") from None
    except yaml.MarkedYAMLError as problem:
        mark = problem.problem_mark or problem.context_mark
        line = mark.line + 1 if mark else 1
        what = problem.problem or problem.context or "malformed YAML"
        if "'\\t'" in what:  # PyYAML: "found character '\t' that cannot start any token"
            what = "tabs are not allowed in YAML, use spaces to indent"
        raise InputError(path, line, f"not valid YAML: {what}") from None
    except yaml.YAMLError as problem:
        raise InputError(path, 1, f"not valid YAML: {problem}") from None
    except RecursionError:
        raise InputError(path, 1, f"YAML nests more than {MAX_NESTING} levels deep") from None
    if root is None:
        raise InputError(path, 1, "file is empty; expected a YAML mapping")
    try:
        data = _Converter(loader, path).convert(root)
    finally:
        loader.dispose()
    return YamlFile(path, data)


class _Converter:
    """Turns composed nodes into Mapping / Sequence / scalars with lines."""

    def __init__(self, loader: yaml.SafeLoader, path: str):
        self.loader = loader
        self.path = path
        self.budget = MAX_EXPANDED_NODES

    def convert(self, root):
        # Explicit stack: (node, depth, container, key) so deep files cannot recurse.
        result_holder = Sequence()
        result_holder.lines = []
        stack = [(root, 1, result_holder, None)]
        while stack:
            node, depth, parent, key = stack.pop()
            value = self._shallow(node, depth)
            if isinstance(parent, Mapping):
                parent[key] = value
            else:
                parent.append(value)
                parent.lines.append(node.start_mark.line + 1)
            if isinstance(value, Mapping):
                seen = {}
                for key_node, value_node in node.value:
                    if not isinstance(key_node, yaml.ScalarNode):
                        raise InputError(self.path, key_node.start_mark.line + 1,
                                         "a mapping key must be plain text")
                    self._check_tag(key_node)
                    name = key_node.value
                    line = key_node.start_mark.line + 1
                    if name in seen:
                        raise InputError(self.path, line,
                                         f"key {name!r} appears twice (first on line {seen[name]})")
                    seen[name] = line
                    value.lines[name] = line
                    if isinstance(value_node, yaml.ScalarNode):
                        value.raw[name] = value_node.value
                # Reverse so entries are filled in file order.
                for key_node, value_node in reversed(node.value):
                    stack.append((value_node, depth + 1, value, key_node.value))
            elif isinstance(value, Sequence):
                for item in reversed(node.value):
                    stack.append((item, depth + 1, value, None))
        return result_holder[0]

    def _shallow(self, node, depth):
        self.budget -= 1
        if self.budget < 0:
            raise InputError(self.path, node.start_mark.line + 1,
                             f"file expands to more than {MAX_EXPANDED_NODES} values "
                             "(aliases repeated too often?)")
        if depth > MAX_NESTING:
            raise InputError(self.path, node.start_mark.line + 1,
                             f"YAML nests more than {MAX_NESTING} levels deep")
        self._check_tag(node)
        line = node.start_mark.line + 1
        if isinstance(node, yaml.MappingNode):
            return Mapping.at(line)
        if isinstance(node, yaml.SequenceNode):
            sequence = Sequence()
            sequence.line, sequence.lines = line, []
            return sequence
        if node.tag == _TIMESTAMP_TAG:
            # A date-like scalar is kept as the text the user wrote.
            return node.value
        try:
            return self.loader.construct_object(node, deep=True)
        except (yaml.YAMLError, ValueError, OverflowError) as problem:
            raise InputError(self.path, line, f"cannot read value {node.value!r}: {problem}") from None

    def _check_tag(self, node):
        if node.tag not in _PLAIN_TAGS and node.tag != _TIMESTAMP_TAG:
            raise InputError(self.path, node.start_mark.line + 1,
                             f"YAML tag {node.tag!r} is not allowed; use plain text, numbers, "
                             "lists and mappings")

