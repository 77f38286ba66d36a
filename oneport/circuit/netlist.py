"""Reading netlists: one element per line, SI suffixes, node ``0`` is ground.

Grammar (case is ignored except in file names)::

    * a comment (from * to the end of the line); a line starting with + continues the last
    R<name> NODE NODE VALUE
    L<name> NODE NODE VALUE [esr=VALUE | q=VALUE]
    C<name> NODE NODE VALUE [esr=VALUE | q=VALUE]
    G<name> OUT+ OUT- CONTROL+ CONTROL- GM
    T<name> P1+ P1- P2+ P2- z0=VALUE (len=VALUE [eeff=VALUE] | delay=VALUE) [loss=DB at=FREQ]
    .opamp NAME OUT IN+ IN- [a0=VALUE] [gbw=VALUE]
    N<name> NODE... [REFERENCE] file=PATH
    .oneport NODE [REFERENCE]
    .twoport NODE NODE | .twoport NODE REFERENCE NODE REFERENCE
    .set NAME=VALUE [NAME=VALUE ...]
    .end

Every refusal is one line naming the file, the line, the token and what would be accepted.
This room reads text; it never evaluates anything in it.

Two spellings from other netlist dialects are refused rather than guessed at: an element line
starting with ``O`` (in the common SPICE dialects a lossy transmission line; the op-amp is the
keyword line ``.opamp``, so a pasted line can never be read as the wrong element), and the
series-loss keyword ``rser=`` (ours is ``esr=``, the equivalent series resistance).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from ..errors import FileFormatError
from ..reading.files import NETLIST_SUFFIXES, decode_text, read_user_bytes
from .blocks import read_block_file
from .elements import ELEMENT_TYPES, Block, Element
from .model import Circuit
from .values import ParameterReference, ValueSpec, ValueTokenError, is_name, parse_value

#: File suffixes read as netlists (one list, in :mod:`oneport.reading.files`).
CIRCUIT_SUFFIXES = NETLIST_SUFFIXES

__all__ = ["CIRCUIT_SUFFIXES", "parse_circuit", "read_circuit"]


@dataclass(frozen=True)
class _Syntax:
    """Nodes, positional values and keywords of one element letter."""

    nodes: int
    positional: tuple[str, ...]
    keywords: tuple[str, ...]
    usage: str


_SYNTAX = {
    "R": _Syntax(2, ("resistance",), (), "R<name> NODE NODE VALUE"),
    "L": _Syntax(2, ("inductance",), ("esr", "q"), "L<name> NODE NODE VALUE [esr=|q=]"),
    "C": _Syntax(2, ("capacitance",), ("esr", "q"), "C<name> NODE NODE VALUE [esr=|q=]"),
    "G": _Syntax(4, ("gm",), (), "G<name> OUT+ OUT- CONTROL+ CONTROL- GM"),
    "T": _Syntax(
        4,
        (),
        ("z0", "len", "eeff", "delay", "loss", "at"),
        "T<name> P1+ P1- P2+ P2- z0= (len= [eeff=] | delay=) [loss= at=]",
    ),
    "O": _Syntax(3, (), ("a0", "gbw"), ".opamp NAME OUT IN+ IN- [a0=] [gbw=]"),
}
_DIRECTIVES = (".oneport", ".twoport", ".set", ".opamp", ".end")
#: Element letters read from netlist lines (the op-amp, internally "O", has its keyword line).
_LINE_LETTERS = ("R", "L", "C", "G", "T", "N")
_TOKEN = re.compile(r'"[^"]*"|[^\s=]+|=')


def read_circuit(path: str | Path) -> Circuit:
    """Read a netlist file into a :class:`Circuit` (validated, ready to evaluate).

    Parameters
    ----------
    path : str or Path
        The netlist (``.cir``); Touchstone blocks' ``file=`` paths are relative to its folder.

    Raises
    ------
    FileFormatError
        One line: file, line, the offending token and what would be accepted.
    """
    name = str(path)
    text = decode_text(name, read_user_bytes(path, "a netlist"), "a netlist")
    return parse_circuit(text, source=name, folder=Path(path).parent)


def parse_circuit(text: str, source: str = "netlist", folder: str | Path = ".") -> Circuit:
    """Parse netlist text into a validated :class:`Circuit`.

    Parameters
    ----------
    text : str
        The netlist.
    source : str
        Name used in messages (the file path).
    folder : str or Path
        Where relative ``file=`` paths of Touchstone blocks are looked up.

    Examples
    --------
    >>> circuit = parse_circuit('''
    ... * a tank with a negative resistance
    ... .set RN=-100
    ... Rn 1 0 RN
    ... L1 1 0 10n esr=0.5
    ... C1 1 0 2.2p
    ... .oneport 1
    ... ''')
    >>> circuit.parameters
    {'RN': -100.0}
    """
    circuit = Circuit(source)
    last_line = max(1, len(text.splitlines()))
    for number, tokens in _logical_lines(text, source):
        head = tokens[0]
        if head.lower() == ".opamp":
            circuit.add(_opamp(circuit, tokens[1:], number))
        elif head.startswith("."):
            if _directive(circuit, head.lower(), tokens[1:], number):
                last_line = number
                break
        else:
            circuit.add(_element(circuit, tokens, number, Path(folder)))
    if not circuit.ports:
        raise FileFormatError(
            source,
            "the netlist ends without a port: add a line '.oneport NODE' naming the node the"
            " other side of the loop connects to (or '.twoport NODE NODE' for a two-port)",
            last_line,
        )
    circuit.validate()
    return circuit


def _logical_lines(text: str, source: str) -> list[tuple[int, list[str]]]:
    """(first line number, tokens) per logical line; ``+`` lines continue the one before."""
    lines: list[tuple[int, list[str]]] = []
    for number, physical in enumerate(text.splitlines(), start=1):
        content = _strip_comment(physical).strip()
        if not content:
            continue
        if content.startswith("+"):
            if not lines:
                raise FileFormatError(
                    source, "a '+' continuation line with nothing before it", number
                )
            lines[-1][1].extend(_tokens(content[1:], source, number))
            continue
        lines.append((number, _tokens(content, source, number)))
    return [(number, tokens) for number, tokens in lines if tokens]


def _strip_comment(line: str) -> str:
    quoted = False
    for index, character in enumerate(line):
        if character == '"':
            quoted = not quoted
        elif character == "*" and not quoted:
            return line[:index]
    return line


def _tokens(content: str, source: str, number: int) -> list[str]:
    """Split on blanks, keep quoted paths whole, and join ``key = value`` into ``key=value``."""
    if content.count('"') % 2:
        raise FileFormatError(source, 'a quote (") is not closed on this line', number)
    raw = _TOKEN.findall(content)
    tokens: list[str] = []
    index = 0
    while index < len(raw):
        token = raw[index]
        if token == "=":
            if not tokens or index + 1 >= len(raw) or not is_name(tokens[-1]):
                before = repr(tokens[-1]) if tokens else "nothing"
                raise FileFormatError(
                    source,
                    f"'=' after {before}: '=' needs a keyword name before it and a value after"
                    " it (e.g. esr=0.2)",
                    number,
                )
            tokens[-1] = f"{tokens[-1]}={raw[index + 1]}"
            index += 2
            continue
        tokens.append(token)
        index += 1
    return tokens


def _directive(circuit: Circuit, head: str, arguments: list[str], number: int) -> bool:
    """Apply a directive; True for ``.end``."""
    source = circuit.source
    if head == ".end":
        return True
    if head == ".set":
        _set(circuit, arguments, number)
    elif head in (".oneport", ".twoport"):
        _ports(circuit, head, arguments, number)
    else:
        raise FileFormatError(
            source, f"unknown directive {head!r}; accepted: {', '.join(_DIRECTIVES)}", number
        )
    return False


def _set(circuit: Circuit, arguments: list[str], number: int) -> None:
    if not arguments:
        raise FileFormatError(circuit.source, ".set needs NAME=VALUE, e.g. .set RD=80", number)
    for argument in arguments:
        name, equals, text = argument.partition("=")
        if not equals or not is_name(name):
            raise FileFormatError(
                circuit.source,
                f".set: {argument!r} is not NAME=VALUE (a name starts with a letter, e.g. RD=80)",
                number,
            )
        value = _value(circuit.source, text, number, f"{name}=")
        if isinstance(value, ParameterReference):
            raise FileFormatError(
                circuit.source, f".set {name}={text}: a parameter's value must be a number", number
            )
        circuit.parameter(name, value, line=number)


def _ports(circuit: Circuit, head: str, arguments: list[str], number: int) -> None:
    source = circuit.source
    if circuit.ports:
        first = circuit.ports[0].line
        raise FileFormatError(
            source,
            f"a second port directive (the first is on line {first}); a circuit has one"
            " .oneport NODE [REFERENCE], or one .twoport line for a two-port",
            number,
        )
    for argument in arguments:
        if "=" in argument:
            raise FileFormatError(source, f"{head}: {argument!r} is not a node name", number)
    if head == ".oneport" and len(arguments) in (1, 2):
        circuit.port(*arguments, line=number)
    elif head == ".twoport" and len(arguments) == 2:
        circuit.port(arguments[0], line=number).port(arguments[1], line=number)
    elif head == ".twoport" and len(arguments) == 4:
        circuit.port(arguments[0], arguments[1], line=number)
        circuit.port(arguments[2], arguments[3], line=number)
    else:
        accepted = (
            ".oneport NODE [REFERENCE]"
            if head == ".oneport"
            else ".twoport NODE NODE, or .twoport NODE REFERENCE NODE REFERENCE"
        )
        raise FileFormatError(
            source, f"{head} with {len(arguments)} nodes; accepted: {accepted}", number
        )


def _element(circuit: Circuit, tokens: list[str], number: int, folder: Path) -> Element:
    source = circuit.source
    name = tokens[0]
    letter = name[0].upper()
    if letter == "O":
        raise FileFormatError(
            source,
            f"{name!r}: an O line is a lossy transmission line in the common SPICE dialects,"
            " which oneport does not read; write a line as T ... z0= (len=|delay=) [loss= at=]"
            " and an op-amp as .opamp NAME OUT IN+ IN- [a0=] [gbw=]",
            number,
        )
    if letter not in _LINE_LETTERS:
        accepted = " ".join(_LINE_LETTERS)
        raise FileFormatError(
            source,
            f"{name!r}: unknown element letter {name[0]!r}; accepted: {accepted} (and"
            f" directives {', '.join(_DIRECTIVES)})",
            number,
        )
    if "=" in name:
        raise FileFormatError(source, f"{name!r}: an element name cannot hold '='", number)
    positional = [token for token in tokens[1:] if "=" not in token]
    keywords = [token for token in tokens[1:] if "=" in token]
    if letter == "N":
        return _block(circuit, name, positional, keywords, number, folder)
    return _built(circuit, letter, name, tokens[1:], number)


def _opamp(circuit: Circuit, arguments: list[str], number: int) -> Element:
    """``.opamp NAME OUT IN+ IN- [a0=] [gbw=]``: the op-amp, in a keyword line of its own."""
    if not arguments or "=" in arguments[0]:
        raise FileFormatError(
            circuit.source,
            ".opamp needs a name, then OUT IN+ IN- (e.g. .opamp U1 out p n gbw=1g)",
            number,
        )
    return _built(circuit, "O", arguments[0], arguments[1:], number)


def _built(circuit: Circuit, letter: str, name: str, rest: list[str], number: int) -> Element:
    """An element of ``letter``'s syntax from its name and the tokens after it."""
    source = circuit.source
    tokens = [name, *rest]
    if "=" in name:
        raise FileFormatError(source, f"{name!r}: an element name cannot hold '='", number)
    positional = [token for token in rest if "=" not in token]
    keywords = [token for token in rest if "=" in token]
    syntax = _SYNTAX[letter]
    wanted = syntax.nodes + len(syntax.positional)
    if len(positional) != wanted or _keyword_before_positional(tokens):
        raise FileFormatError(
            source,
            f"{name} needs {syntax.nodes} nodes"
            + (" and a value" if syntax.positional else "")
            + f" ({syntax.usage}); got {len(positional)} plain tokens",
            number,
        )
    nodes = tuple(token.lower() for token in positional[: syntax.nodes])
    values: dict[str, ValueSpec] = {}
    for key, token in zip(syntax.positional, positional[syntax.nodes :], strict=True):
        values[key] = _value(source, token, number, name)
    values.update(_keyword_values(source, name, keywords, syntax.keywords, number))
    _check_combinations(source, name, letter, values, number)
    return ELEMENT_TYPES[letter](name=name, nodes=nodes, values=values, line=number)


def _keyword_before_positional(tokens: list[str]) -> bool:
    seen_keyword = False
    for token in tokens[1:]:
        if "=" in token:
            seen_keyword = True
        elif seen_keyword:
            return True
    return False


def _keyword_values(
    source: str, name: str, keywords: list[str], accepted: tuple[str, ...], number: int
) -> dict[str, ValueSpec]:
    values: dict[str, ValueSpec] = {}
    for token in keywords:
        key, _, text = token.partition("=")
        key = key.lower()
        if key == "rser" and "esr" in accepted:
            raise FileFormatError(
                source,
                f"{name}: rser= is not read here; write the series resistance as esr= (the"
                f" equivalent series resistance, e.g. esr={text or '0.4'})",
                number,
            )
        if key not in accepted:
            listed = ", ".join(f"{k}=" for k in accepted) or "none"
            raise FileFormatError(
                source, f"{name}: unknown parameter {key + '='!r}; accepted: {listed}", number
            )
        if key in values:
            raise FileFormatError(source, f"{name}: {key}= is given twice", number)
        values[key] = _value(source, text, number, f"{name} {key}=")
    return values


def _check_combinations(
    source: str, name: str, letter: str, values: dict[str, ValueSpec], number: int
) -> None:
    def refuse(problem: str) -> None:
        raise FileFormatError(source, f"{name}: {problem}", number)

    if letter in "LC" and "esr" in values and "q" in values:
        refuse("give esr= (a series resistance) or q= (a constant quality factor), not both")
    if letter == "R" and values["resistance"] == 0.0:
        refuse("a resistance of 0; join the two nodes by giving them one name instead")
    if letter == "T":
        if "z0" not in values:
            refuse("a line needs z0= (its characteristic impedance in ohms)")
        if ("len" in values) == ("delay" in values):
            refuse("give the line's len= (metres, with optional eeff=) or its delay=, not both")
        if "eeff" in values and "len" not in values:
            refuse("eeff= goes with len=; with delay= the permittivity is already included")
        if ("loss" in values) != ("at" in values):
            refuse("loss= (dB over the line) needs at= (the frequency it is stated at), and back")


def _block(
    circuit: Circuit,
    name: str,
    positional: list[str],
    keywords: list[str],
    number: int,
    folder: Path,
) -> Block:
    source = circuit.source
    files = [token for token in keywords if token.lower().startswith("file=")]
    others = [token for token in keywords if not token.lower().startswith("file=")]
    if len(files) != 1 or others:
        raise FileFormatError(
            source,
            f"{name}: a block takes its nodes and one file=PATH (a Touchstone file),"
            f" e.g. N1 gate drain source file=amp.s2p; got {' '.join(keywords) or 'no file='}",
            number,
        )
    text = files[0].partition("=")[2].strip('"')
    path = Path(text) if Path(text).is_absolute() else folder / text
    data = read_block_file(path, f"{source}:{number}: {name}")
    if len(positional) == data.ports:
        nodes = (*(token.lower() for token in positional), "0")
    elif len(positional) == data.ports + 1:
        nodes = tuple(token.lower() for token in positional)
    else:
        raise FileFormatError(
            source,
            f"{name}: {text} has {data.ports} ports, so give {data.ports} nodes (reference 0)"
            f" or {data.ports + 1} (the last is the ports' common reference); got"
            f" {len(positional)}",
            number,
        )
    return Block(name=name, nodes=nodes, path=str(path), data=data, line=number)


def _value(source: str, token: str, number: int, what: str) -> ValueSpec:
    try:
        return parse_value(token)
    except ValueTokenError as error:
        raise FileFormatError(source, f"{what}: {error}", number) from None
