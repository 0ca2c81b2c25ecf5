"""The validation engine: one number parser, one message shape, defaults never shared."""
from __future__ import annotations

import numpy as np
import pytest
import yaml

from evidence1d.errors import InputError
from evidence1d.schema import (Field, Spec, as_float, as_int, as_mapping, check_mapping,
                               check_tagged, integer, real, unique_names)


@pytest.mark.parametrize("text, value", [("1e-3", 1e-3), ("1.0e-3", 1e-3), ("5", 5.0),
                                         ("-2.5E2", -250.0), (".5", 0.5)])
def test_numbers_read_the_same_whatever_yaml_makes_of_them(text, value):
    # PyYAML follows YAML 1.1, whose float needs a dot: '1e-3' arrives as a string
    raw = yaml.safe_load(f"x: {text}")["x"]
    assert as_float(raw, "x") == value
    assert as_float(np.float32(0.5), "x") == 0.5 and as_float(np.int64(3), "x") == 3.0


@pytest.mark.parametrize("bad", ["abc", True, None, [1.0], "nan", float("inf"), "1e400"])
def test_non_numbers_and_non_finite_numbers_are_refused_naming_the_key(bad):
    with pytest.raises(InputError) as info:
        as_float(bad, "sampler.ess_fraction")
    assert info.value.key == "sampler.ess_fraction"
    assert str(info.value).startswith("key 'sampler.ess_fraction': expected a finite number")


def test_integers_accept_integral_numbers_only():
    assert as_int("1e3", "k") == 1000 and as_int(64.0, "k") == 64 and as_int(" 7 ", "k") == 7
    assert as_int("123456789012345678901", "k") == 123456789012345678901       # exact
    for bad in (2.5, "2.5", True, "x"):
        with pytest.raises(InputError, match="expected an integer"):
            as_int(bad, "k")


def test_bounds_are_stated_in_the_message():
    frac = real(0.0, 1.0, lower_open=True, upper_open=True)
    assert frac("5e-1", "f") == 0.5
    with pytest.raises(InputError, match=r"key 'f': expected a number in \(0, 1\); got 1"):
        frac(1, "f")
    with pytest.raises(InputError, match=r"expected an integer >= 10 \(2 m \+ 2\); got 8"):
        integer(10, note="2 m + 2")(8, "n_walkers")
    with pytest.raises(InputError, match="expected an integer from 2 to 4096"):
        integer(2, 4096)(5000, "max_grid")


def test_defaults_are_never_shared_between_mappings():
    spec = Spec({"units": Field(as_mapping, default={}), "n": Field(real(0.0), default=1.0)})
    a = check_mapping({}, spec, "a")
    b = check_mapping({}, spec, "b")
    a["units"]["energy"] = "meV"
    assert b["units"] == {} and spec.fields["units"].default == {}


def test_checks_across_keys_and_tagged_mappings_name_their_key():
    def ordered(v, where):
        if v["lower"] >= v["upper"]:
            raise InputError("lower must be smaller than upper", key=where)
    box = {"box": Spec({"kind": Field(), "lower": Field(as_float, required=True),
                        "upper": Field(as_float, required=True)}, what="a box",
                       checks=(ordered,))}
    assert check_tagged({"kind": "box", "lower": "1e-3", "upper": 1}, "kind", box, "p",
                        what="shape") == {"kind": "box", "lower": 1e-3, "upper": 1.0}
    with pytest.raises(InputError) as info:
        check_tagged({"kind": "box", "lower": 2, "upper": 1}, "kind", box, "p", what="shape")
    assert info.value.key == "p"
    with pytest.raises(InputError) as info:
        check_tagged({"kind": "bx"}, "kind", box, "p", what="shape")
    assert info.value.key == "p.kind" and "unknown shape kind 'bx'; did you mean 'box'" in \
        str(info.value)


def test_unique_names():
    assert unique_names(("J", "g"), "names") == ["J", "g"]
    with pytest.raises(InputError, match="repeated: J"):
        unique_names(["J", "g", "J"], "names")
