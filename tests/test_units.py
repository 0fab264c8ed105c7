"""Parsing of quantities people type (the units edge)."""

import math
import subprocess
import sys

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


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # A calibration as labs write it (common practice): length per image pixel, or
        # image pixels per length; 50 px/mm is 1/50 mm = 20 µm by arithmetic.
        ("20 µm/px", 20e-6),
        ("20 um / pixel", 20e-6),
        ("2.5 µm/pixels", 2.5e-6),
        ("50 px/mm", 20e-6),
        ("0.05 px/µm", 20e-6),
    ],
)
def test_a_pixel_size_is_read_from_a_calibration(text, expected):
    assert parse_si(text, "m", key="recording.pixel_size") == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("text", ["20 px", "20 pixel", "20 µm/px/px", "20 px*mm"])
def test_an_image_pixel_is_never_taken_for_a_length(text):
    # pint's "px" is the screen pixel, 1/96 inch (CSS Values and Units, W3C): "20 px"
    # would be 5.29 mm. An image pixel has no physical size of its own.
    with pytest.raises(QuantityError, match=r"recording\.pixel_size.*image pixel.*µm/px") as err:
        parse_si(text, "m", key="recording.pixel_size")
    assert "printing_unit" not in str(err.value) and "css" not in str(err.value)


@pytest.mark.parametrize("text", ["12 pt", "1 pica", "3 points"])
def test_typographic_units_are_refused_as_lengths(text):
    # A printer's point is 1/72 inch (pint's definition); no recording is sized in it.
    with pytest.raises(QuantityError, match=r"--pixel-size.*typographic.*e\.g\. '1 m'"):
        parse_si(text, "m", key="--pixel-size")


def test_a_pixel_is_refused_where_no_length_is_asked():
    with pytest.raises(QuantityError, match="image pixel"):
        parse_si("20 px/s", "Hz", key="recording.frame_rate")


@pytest.mark.parametrize(
    ("text", "unit", "words"),
    [
        # C is the coulomb and F the farad (BIPM SI Brochure, 9th ed., Table 4); the
        # degree Celsius is degC. cSt is a kinematic viscosity (mm²/s).
        ("20 C", "K", r"electric charge.*temperature.*degC"),
        ("68 F", "K", r"capacitance.*temperature.*degF"),
        ("100 cSt", "Pa*s", r"kinematic viscosity.*dynamic viscosity.*density"),
        ("72 m/s", "N/m", r"speed.*surface tension"),
    ],
)
def test_a_wrong_dimension_is_named_in_words_with_a_hint(text, unit, words):
    with pytest.raises(QuantityError, match=words) as err:
        parse_si(text, unit, key="k")
    assert "[" not in str(err.value).split("(expected")[0]  # no pint jargon like [current]


@pytest.mark.parametrize("text", ["1e308 Hz", "1e-300 Hz", "1e308 m"])
def test_values_far_beyond_any_laboratory_are_refused(text):
    unit = text.split()[-1]
    with pytest.raises(QuantityError, match="outside what dropkin accepts"):
        parse_si(text, unit, key="k")


def test_a_power_tower_is_refused_at_once_not_computed():
    # "10**10**10" would make pint build a 10-billion-digit integer (issue 17: the
    # process hung at full CPU). Run in a child process so that a hang fails the test.
    code = (
        "from dropkin.units import parse_si\n"
        "try:\n    parse_si('10**10**10 Hz', 'Hz', key='--frame-rate')\n"
        "except Exception as exc:\n    print(type(exc).__name__, exc)\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert done.stdout.startswith("QuantityError") and "e-notation" in done.stdout


def test_a_relative_uncertainty_never_computes_a_power_tower():
    # Issue 17, finding 7, for the [uncertainty] section: the text is read without pint
    # evaluating its numbers, so "10**10**10 %" is refused at once (child process: a hang
    # fails the test), and "2 %" is 0.02 (the percent is 1/100, SI Brochure 9th ed.).
    from dropkin.units import parse_relative

    assert parse_relative("2 %", key="uncertainty.viscosity") == pytest.approx(0.02)
    code = (
        "from dropkin.units import parse_relative\n"
        "try:\n    parse_relative('10**10**10 %', key='uncertainty.viscosity')\n"
        "except Exception as exc:\n    print(type(exc).__name__, exc)\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert done.stdout.startswith("QuantityError") and "uncertainty.viscosity" in done.stdout
