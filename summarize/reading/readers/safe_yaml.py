"""YAML loaded safely and within a size budget.

``yaml.safe_load`` builds only plain data, but an alias (``*name``) shares a node,
so a few hundred bytes of nested aliases describe billions of values; they cost
nothing until the data is walked (JSON for the store, the text of a field), and
then they cost everything. Here the composed node graph is measured first with
every alias counted as often as it is used, and refused above the budget, before
any Python object is built.
"""

from __future__ import annotations

import yaml
from yaml.nodes import MappingNode, Node, SequenceNode

from summarize.reading.limits import LimitExceeded, current_limits


def load_bounded_yaml(text: str) -> object:
    """The YAML document in ``text`` as plain data (safe constructors only). Raises
    ``yaml.YAMLError`` when it is not valid YAML and :class:`LimitExceeded` when,
    aliases expanded, it has more nodes than the ``yaml_nodes`` limit."""
    budget = current_limits().yaml_nodes
    loader = yaml.SafeLoader(text)
    try:
        node = loader.get_single_node()
        if node is None:
            return None
        if _expanded_size(node, budget) > budget:
            raise LimitExceeded("front matter, aliases expanded,", "yaml_nodes", budget)
        return loader.construct_document(node)
    finally:
        loader.dispose()


def _expanded_size(root: Node, budget: int) -> int:
    """Nodes under ``root`` counting shared (aliased) nodes at every use; stops
    counting once past ``budget``. Sizes are memoised per node, so the work is
    linear in the composed graph even when its expansion is astronomical."""
    sizes: dict[int, int] = {}
    # Iterative post-order: a deeply nested block must not exhaust the Python stack.
    stack: list[tuple[Node, bool]] = [(root, False)]
    while stack:
        node, children_done = stack.pop()
        if id(node) in sizes:
            continue
        children = _children(node)
        if children_done or not children:
            total = 1 + sum(sizes.get(id(child), 0) for child in children)
            sizes[id(node)] = min(total, budget + 1)
            continue
        stack.append((node, True))
        if len(stack) > budget:
            return budget + 1
        stack.extend((child, False) for child in children if id(child) not in sizes)
    return sizes[id(root)]


def _children(node: Node) -> list[Node]:
    if isinstance(node, SequenceNode):
        return list(node.value)
    if isinstance(node, MappingNode):
        return [part for pair in node.value for part in pair]
    return []
