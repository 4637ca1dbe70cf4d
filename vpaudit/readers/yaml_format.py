"""YAML files: composed node by node, so scalars stay text and duplicate keys are seen."""

from __future__ import annotations

import yaml

from .lines import line_at, line_starts
from .raw import (
    MAX_COLUMNS,
    PARTS,
    RawFrame,
    decode_text,
    error_at,
    no_surrogate,
)

#: The plain scalars YAML 1.1 and 1.2 both read as null; quoted, they stay text.
_YAML_NULLS = frozenset({"", "~", "null", "Null", "NULL"})


def _yaml_scalar(path: str, node: yaml.Node, key: str, at) -> str | None:
    if isinstance(node, yaml.ScalarNode):
        if node.style is None and node.value in _YAML_NULLS:
            return None  # an unquoted null is a missing value, as JSON's null is
        no_surrogate(path, node.value, at(node.start_mark), key)
        return node.value
    raise error_at(
        path,
        f"field {key!r} holds a {node.id}; expected a single value",
        at(node.start_mark),
        key,
    )


def _yaml_items(path: str, node: yaml.Node, at) -> tuple[list[yaml.MappingNode], str | None]:
    hint = None
    if isinstance(node, yaml.MappingNode):
        keys = [k.value for k, _ in node.value]
        if len(keys) == 1 and keys[0] in PARTS:
            hint = keys[0]
            node = node.value[0][1]
        else:
            raise error_at(
                path,
                "expected a list of items, or a mapping with one key "
                "'records', 'references' or 'points' holding that list",
                at(node.start_mark),
            )
    if not isinstance(node, yaml.SequenceNode):
        raise error_at(path, "expected a list of items", at(node.start_mark))
    items = []
    for item in node.value:
        if not isinstance(item, yaml.MappingNode):
            raise error_at(
                path,
                "each item must be a mapping of field names to values",
                at(item.start_mark),
            )
        items.append(item)
    return items, hint


class _NoAliasComposer(yaml.BaseLoader):
    def compose_node(self, parent, index):  # noqa: D102
        if self.check_event(yaml.AliasEvent):
            event = self.peek_event()
            raise yaml.composer.ComposerError(
                None, None, "aliases are not allowed in table files", event.start_mark
            )
        return super().compose_node(parent, index)


def read_yaml(path: str, data: bytes) -> RawFrame:
    """Read a YAML list of mappings; every scalar stays the text written.

    No YAML 1.1 typing applies (``NO``, ``0123``, ``1:30``, ``2001-01-01`` stay text), a
    duplicate key is an error, and aliases are refused.
    """
    text = decode_text(path, data)
    if not text.strip():
        raise error_at(path, "file is empty: expected a list of items")
    starts = line_starts(text)

    def at(mark) -> int:  # PyYAML's own line count also breaks at U+2028 and U+0085
        return line_at(starts, mark.index)

    try:
        loader = _NoAliasComposer(text)
        try:
            root = loader.get_single_node()
        finally:
            loader.dispose()
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark
        raise error_at(path, f"malformed YAML: {exc.problem}", at(mark) if mark else None) from None
    except yaml.YAMLError as exc:
        raise error_at(path, f"malformed YAML: {exc}") from None
    except RecursionError:
        raise error_at(path, "malformed YAML: nested too deeply for a table file") from None
    if root is None:
        raise error_at(path, "file is empty: expected a list of items")
    items, hint = _yaml_items(path, root, at)
    columns: list[str] = []
    records: list[dict[str, str | None]] = []
    lines = []
    for item in items:
        row: dict[str, str | None] = {}
        for knode, vnode in item.value:
            key = knode.value if isinstance(knode, yaml.ScalarNode) else None
            if not key:
                raise error_at(path, "field names must be plain text", at(knode.start_mark))
            if key in row:
                raise error_at(
                    path,
                    f"field {key!r} is given twice in one item",
                    at(knode.start_mark),
                    key,
                )
            row[key] = _yaml_scalar(path, vnode, key, at)
            if key not in columns:
                columns.append(key)
                if len(columns) > MAX_COLUMNS:
                    raise error_at(
                        path,
                        f"the items name more than {MAX_COLUMNS} fields; the table format "
                        "has fewer",
                        at(knode.start_mark),
                        key,
                    )
        records.append(row)
        lines.append(at(item.start_mark))
    cells = {c: [r.get(c) for r in records] for c in columns}
    return RawFrame(path, columns, cells, lines, hint)
