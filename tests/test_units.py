"""Parsing of quantities people type (the units edge)."""

import math

import click
import pytest
from click.testing import CliRunner

from dropkin.errors import QuantityError
from dropkin.units import QuantityType, parse_quantity, parse_si, ureg


@pytest.mark.parametrize(
    ("text", "unit", "expected"),
    [
        # Conversion factors are SI prefix definitions (BIPM SI Brochure, 9th ed.).
        ("20000 Hz", "Hz", 2.0e4),
        ("20 kfps", "Hz", 2.0e4),
        ("1 Mfps", "Hz", 1.0e6),
        ("5 um", "m", 5.0e-6),
        ("2.5 µm", "m", 2.5e-6),
        ("63 mN/m", "N/m", 0.063),
        ("110 mPa*s", "Pa*s", 0.110),
        ("1 cP", "Pa*s", 1.0e-3),
        ("1220 kg/m^3", "kg/m^3", 1220.0),
        ("1.22 g/cm^3", "kg/m^3", 1220.0),
        # 0 degC is 273.15 K exactly (SI definition of the degree Celsius).
        ("21 degC", "K", 294.15),
        ("300 K", "K", 300.0),
    ],
)
def test_parses_and_converts_to_si(text, unit, expected):
    assert math.isclose(parse_si(text, unit), expected, rel_tol=1e-12)


def test_fps_is_one_per_second():
    assert ureg.Quantity("1 fps").to("Hz").magnitude == pytest.approx(1.0, rel=1e-15)


def test_keeps_the_users_units():
    q = parse_quantity("5 um", "m")
    assert str(q.units) == "micrometer"


@pytest.mark.parametrize("bare", [72, 72.0, "72", " 0.5 "])
def test_refuses_a_bare_number_naming_key_and_unit(bare):
    with pytest.raises(QuantityError, match=r"liquid\.surface_tension.*bare number.*N/m"):
        parse_si(bare, "N/m", key="liquid.surface_tension")


def test_refuses_a_wrong_dimension_naming_key_value_and_unit():
    with pytest.raises(QuantityError, match=r"liquid\.surface_tension = '72 m/s'.*dimension.*N/m"):
        parse_si("72 m/s", "N/m", key="liquid.surface_tension")


@pytest.mark.parametrize("text", ["seventy", "5 furlongz", "", "3 +* m", "nan Hz", "inf Hz"])
def test_refuses_unparsable_or_non_finite_text(text):
    with pytest.raises(QuantityError, match="recording.frame_rate"):
        parse_si(text, "Hz", key="recording.frame_rate")


def test_click_type_turns_errors_into_usage_errors():
    @click.command()
    @click.option("--pixel-size", type=QuantityType("m"))
    def cmd(pixel_size):
        click.echo(repr(pixel_size))

    runner = CliRunner()
    ok = runner.invoke(cmd, ["--pixel-size", "2.5 um"])
    assert ok.exit_code == 0
    assert float(ok.output) == pytest.approx(2.5e-6, rel=1e-12)
    bad = runner.invoke(cmd, ["--pixel-size", "3 s"])
    assert bad.exit_code == 2
    assert "--pixel-size" in bad.output and "dimension" in bad.output
    assert "Traceback" not in bad.output
