"""The exact JSON reading of scripts/check_bundle.py (standard library only).

Numbers become exact Fractions under pleat-network/1's grammar; a key written
twice in one object is refused; an ONNX model given where a JSON file is read
is named as such, with the command that turns it into pleat-network/1 JSON.
"""

import json
import re
from fractions import Fraction


class Rejected(Exception):
    pass


# pleat-network/1's grammar of an exact number (ASCII digits only: Fraction
# alone would also take "1_000", " 1/2" or other scripts' digits), with the
# decimal exponent pleat's reader allows.
NUMBER = re.compile(r"-?(?:(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE]([+-]?[0-9]+))?|[0-9]+/[0-9]+)")


def number(value, where):
    if isinstance(value, bool) or not isinstance(value, (int, str, Fraction)):
        raise Rejected(f"{where}: expected a number, found {value!r}")
    if isinstance(value, str):
        spelled = NUMBER.fullmatch(value)
        if not spelled or (spelled.group(1) and abs(int(spelled.group(1))) > 4000):
            raise Rejected(f"{where}: not a number as pleat writes one: {value!r}")
    try:
        return Fraction(value)
    except ZeroDivisionError:
        raise Rejected(f"{where}: not a number: {value!r}") from None


def numbers(values, length, where):
    if not isinstance(values, list) or len(values) != length:
        raise Rejected(f"{where}: expected a list of {length} numbers")
    return [number(v, f"{where}[{i}]") for i, v in enumerate(values)]


def object_without_duplicates(pairs):
    """With a key written twice, json keeps the last value; a reader may take the first."""
    keys = [key for key, _ in pairs]
    if len(set(keys)) != len(keys):
        raise ValueError(f"the key {next(k for k in keys if keys.count(k) > 1)!r} is written twice in one object")
    return dict(pairs)


def exact_float(text):
    try:
        return number(text, "a JSON number")
    except Rejected as fault:
        raise ValueError(str(fault)) from None


def is_onnx_model(path, data):
    """An ONNX model's bytes: a protobuf ModelProto opens with field 1 (ir_version,
    a varint: tag byte 0x08), which no JSON text can start with."""
    return data[:1] == b"\x08" or (path.lower().endswith(".onnx") and not data.lstrip()[:1] == b"{")


def load(path):
    """The JSON document in path (exit 2 when it cannot be read: OSError or ValueError)."""
    with open(path, "rb") as f:
        data = f.read()
    if is_onnx_model(path, data):
        raise ValueError("an ONNX model; check_bundle.py reads pleat-network/1 JSON only: "
                         f"write that with 'pleat import {path} -o NET.json'")
    return json.loads(data.decode("utf-8"), parse_float=exact_float, object_pairs_hook=object_without_duplicates)


