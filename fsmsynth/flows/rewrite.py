"""Older spec files in today's form: ``fsmsynth rewrite``.

Two older forms are refused by the reader, each with a message naming this command:

* cube rows (``rows = [["state", "input cube", "next state", "output cube"], ...]``): each
  row becomes one ``[[transition]]`` entry with its exact ``cube`` (``to = "-"`` for an open
  next state) and ``states`` declares every state, so the file reads back to an equal table,
  row for row; with ``guards`` the rows are written as guards where that says the same
  machine (:func:`fsmsynth.writers.spec_toml.write_spec`);
* ``from = "*"`` transitions: they move, unchanged, to ``[[every_state]]`` entries, and
  every other key and entry is written back as it was given (comments are not kept), except
  that a Mealy output an entry left unset, which older files left free, is written ``"-"``
  (today an output a transition does not set is its default, or 0).
"""

from __future__ import annotations

import tomllib

from fsmsynth.base.errors import OptionError
from fsmsynth.formats.spec_toml import parse_spec
from fsmsynth.model.table import StateTable
from fsmsynth.writers.spec_toml import toml_value, write_spec

_TOP = ("name", "kind", "inputs", "outputs", "reset", "states", "default_outputs", "otherwise",
        "final", "accept_warnings", "invariants")


def rewrite_spec(text: str, path: str = "<string>", *, guards: bool = False) -> str:
    """Spec text in today's form for the spec ``text`` (older forms included); raises
    :class:`~fsmsynth.base.errors.SpecFileError` as reading it would."""
    table = parse_spec(text, path, legacy=True)  # checks it, older forms included
    if not isinstance(table, StateTable):
        raise OptionError(f"{path}: a spec with timers and counters is in today's form "
                          "already; rewrite has nothing to do")
    note = f"rewritten by fsmsynth rewrite from {path}"
    data = tomllib.loads(text)
    if "rows" in data:
        return write_spec(table, comment=note, guards=guards)
    every = [e for e in data.get("transition", []) if e.get("from") == "*"]
    own = [e for e in data.get("transition", []) if e.get("from") != "*"]
    every += data.get("every_state", [])
    if "states" not in data:  # the declaration order the older reading gave, made explicit
        data["states"] = list(table.states)
    if table.kind == "mealy":  # an output older files left unset was free: say so
        widths = (data["outputs"] if isinstance(data["outputs"], dict)
                  else dict.fromkeys(data["outputs"], 1))
        free = {o: "-" * w for o, w in widths.items() if o not in data.get("default_outputs", {})}
        for entry in [*every, *own]:
            entry["set"] = {**free, **entry.get("set", {})}
    out = [f"# {note}"] + [f"{key} = {toml_value(data[key])}" for key in _TOP if key in data]
    for name, entries, drop in (("every_state", every, "from"), ("transition", own, None)):
        for entry in entries:
            out += ["", f"[[{name}]]"] + [f"{k} = {toml_value(v)}" for k, v in entry.items()
                                         if k != drop]
    if "state_outputs" in data:
        out += ["", "[state_outputs]"] + [f"{toml_value(str(k))} = {toml_value(v)}"
                                          for k, v in data["state_outputs"].items()]
    if "clocking" in data:
        out += ["", "[clocking]"] + [f"{k} = {toml_value(v)}"
                                     for k, v in data["clocking"].items()]
    result = "\n".join(out) + "\n"
    again = parse_spec(result, path)  # the same machine, meant the same way, or a defect here
    assert again == table and again.intent == table.intent
    return result
