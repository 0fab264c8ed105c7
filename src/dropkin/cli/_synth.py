"""``dropkin synth``: a synthetic recording with known truth."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import click

from ..errors import DropkinError, ExperimentError
from ._console import progress_bar
from ._options import FINITE_FLOAT, FiniteFloat, LazyChoice, positive

__all__ = ["synth_command", "law_choices", "regime_choices"]


def law_choices() -> tuple[str, ...]:
    """The laws ``--law`` offers: the regimes of :mod:`dropkin.synth`, and ``power``."""
    from .. import synth  # on first use only: ``dropkin --help`` does not need it

    return (*synth.REGIME_NAMES, "power")


def regime_choices() -> tuple[str, ...]:
    """The laws ``--then`` offers: the regimes of :mod:`dropkin.synth`."""
    from .. import synth

    return synth.REGIME_NAMES


def _size(ctx, param, value):
    """Parse ``ROWSxCOLS`` (e.g. ``256x384``) into (rows, cols)."""
    try:
        rows, cols = (int(part) for part in value.lower().split("x"))
    except ValueError:
        raise click.BadParameter(f"{value!r} is not ROWSxCOLS, e.g. 256x384") from None
    if rows < 8 or cols < 8:
        raise click.BadParameter(f"{value!r}: both sizes must be at least 8 pixels")
    return rows, cols


@click.command("synth")
@click.argument("out", type=click.Path(path_type=str))
@click.option(
    "--geometry",
    type=click.Choice(["coalescence", "spreading"]),
    default="coalescence",
    show_default=True,
    help="Two drops merging, or one drop spreading on a plate.",
)
@click.option("--view", type=click.Choice(["side", "bottom"]), default="side", show_default=True)
@click.option(
    "--law",
    type=LazyChoice(law_choices),
    help="Radius law (default: inertial, or inertial-spreading for spreading).",
)
@click.option("--exponent", type=FINITE_FLOAT, help="Exponent n of --law power.")
@click.option(
    "--prefactor",
    type=FINITE_FLOAT,
    help="--law power: C of r = C t^n in SI units (m s^-n); "
    "inertial, viscous-outer, inertial-spreading, gravity-spreading: the dimensionless C.",
)
@click.option(
    "--then",
    type=LazyChoice(regime_choices),
    help="A second regime that --law hands over to, by the harmonic blend 1/r = 1/r1 + 1/r2;"
    " truth.json records the time at which the two laws meet.",
)
@click.option(
    "--then-prefactor",
    type=FINITE_FLOAT,
    help="The dimensionless C of the --then law (as --prefactor for --law).",
)
@click.option("--surface-tension", type=positive("N/m"), default="72.74 mN/m", show_default=True)
@click.option("--viscosity", type=positive("Pa*s"), default="1.0016 mPa*s", show_default=True)
@click.option("--density", type=positive("kg/m^3"), default="998.2 kg/m^3", show_default=True)
@click.option("--outer-viscosity", type=positive("Pa*s"), default="0.018 mPa*s", show_default=True)
@click.option("--outer-density", type=positive("kg/m^3"), default="1.2 kg/m^3", show_default=True)
@click.option("--liquid-name", default="water", show_default=True, help="Written to [liquid].")
@click.option("--temperature", type=positive("K"), default="20 degC", show_default=True)
@click.option("--glycerol-mass-fraction", type=FiniteFloat(0, 1), help="For glycerol-water.")
@click.option("--drop-radius", type=positive("m"), default="1 mm", show_default=True)
@click.option("--second-radius", type=positive("m"), help="Radius of drop 2 (default equal).")
@click.option(
    "--angle",
    type=FINITE_FLOAT,
    default=0.0,
    show_default=True,
    help="Line of centres, degrees counter-clockwise from horizontal (-90: drop 2 below).",
)
@click.option("--frames", type=click.IntRange(min=1), default=100, show_default=True)
@click.option("--frame-rate", type=positive("Hz"), default="100 kHz", show_default=True)
@click.option("--pixel-size", type=positive("m"), default="10 um", show_default=True)
@click.option("--size", callback=_size, default="320x512", show_default=True, help="ROWSxCOLS.")
@click.option(
    "--contact-frame",
    type=FINITE_FLOAT,
    default=5.0,
    show_default=True,
    help="Contact instant in frames from the first (fractional: between two frames).",
)
@click.option(
    "--noise",
    type=FiniteFloat(min=0),
    default=1.0,
    show_default=True,
    help="Noise level: 1 is a 20000-electron sensor with 10 e- read noise; 0 is none.",
)
@click.option(
    "--blur",
    type=FiniteFloat(min=0),
    default=1.0,
    show_default=True,
    help="Sigma of the Gaussian blur, pixels.",
)
@click.option(
    "--contrast",
    type=click.Choice(["dark-drops", "bright-drops"]),
    default="dark-drops",
    show_default=True,
    help="Dark drops on a backlight, or bright drops on a dark field (front light, fluorescence).",
)
@click.option(
    "--glow",
    type=FiniteFloat(min=0),
    default=0.0,
    show_default=True,
    help="Bright drops: how much brighter their glow's peak is than their rim (0: even).",
)
@click.option("--bit-depth", type=click.Choice(["8", "12"]), default="8", show_default=True)
@click.option(
    "--format",
    "fmt",
    type=click.Choice(["png", "tiff", "mp4", "jpeg"]),
    help="png: a folder of frames; tiff: a multi-page file; lossy, as recordings are often"
    " shared: mp4 (MPEG-4 video) or jpeg (a folder of JPEG frames), 8-bit only"
    " (default: from OUT's suffix).",
)
@click.option(
    "--bit-rate",
    type=positive("bit/s"),
    help="mp4: the bit rate at the 30 fps playback rate, e.g. '10 kbit/s' for a heavily"
    " compressed export (default: the encoder's).",
)
@click.option(
    "--jpeg-quality",
    type=click.IntRange(1, 100),
    default=75,
    show_default=True,
    help="jpeg: the JPEG quality.",
)
@click.option("--seed", type=click.IntRange(min=0), default=0, show_default=True)
@click.option(
    "--reflectivity",
    type=FiniteFloat(0, 1, max_open=True),
    default=0.0,
    show_default=True,
    help="Spreading, side view: 0 for an opaque plate, else the drop's mirror image shows.",
)
@click.option(
    "--substrate-row",
    type=FINITE_FLOAT,
    help="Spreading, side view: row of the plate's surface, anywhere inside a pixel (default:"
    " on a pixel edge 70 % down the frame). With --reflectivity and a law that spreads to a"
    " few drop radii, a drop lowered onto a mirror at small angles.",
)
@click.option("--needle-width", type=positive("m"), help="A needle into the upper drop.")
@click.option(
    "--dust",
    type=click.IntRange(min=0),
    default=0,
    show_default=True,
    help="Number of dust specks.",
)
@click.option(
    "--approach-speed",
    type=positive("m/s"),
    help="Before contact (default: half a pixel per frame).",
)
@click.option(
    "--approach",
    type=click.Choice(["both-move", "second-moves", "growth"]),
    default="both-move",
    show_default=True,
    help="Coalescence: how the gap closes before contact at --approach-speed: both drops"
    " move, drop 2 alone is driven towards drop 1, or both drops grow on fixed needles.",
)
@click.option(
    "--ringing-at",
    type=FiniteFloat(0, 1, min_open=True, max_open=True),
    help="Coalescence: the growth phase ends when the neck reaches this fraction of the"
    " drop radius, and the neck then rings about a rest radius (truth.json records"
    " growth_end_time).",
)
@click.option(
    "--ringing-rest",
    type=FiniteFloat(min=0, min_open=True),
    default=0.9,
    show_default=True,
    help="With --ringing-at: the rest radius over the neck radius at the end of the growth.",
)
@click.option("--overwrite", is_flag=True, help="Replace existing output.")
@click.pass_context
def synth_command(ctx, out, **options):
    """Write a synthetic recording with known truth to OUT (a folder, a .tif or a .mp4 file)."""
    try:
        _synth(ctx, out, options)
    except DropkinError as exc:
        raise _as_option_error(ctx, exc) from None


def _as_option_error(ctx, exc):
    """`exc` naming the command's option (``--contact-frame``) instead of the
    library's keyword (``contact_frame``), when there is such an option."""
    option = "--" + (exc.key or "").replace("_", "-")
    if exc.key is None or not any(option in p.opts for p in ctx.command.params):
        return exc
    fields = {name: getattr(exc, name) for name in ("path", "value", "expected", "frame")}
    return type(exc)(exc.message, key=option, **fields)


def _setup(o):
    """The coalescence or spreading setup of the options `o`."""
    from .. import synth

    if o["geometry"] == "coalescence":
        if o["substrate_row"] is not None:
            raise ExperimentError("applies only to spreading", key="--substrate-row")
        return synth.Coalescence(
            view=o["view"],
            drop_radius=o["drop_radius"],
            second_radius=o["second_radius"],
            angle_deg=o["angle"],
            approach_speed=o["approach_speed"],
            needle_width=o["needle_width"] or 0.0,
            approach=o["approach"],
        )
    if o["approach"] != "both-move":
        raise ExperimentError("applies only to coalescence", key="--approach")
    if o["ringing_at"] is not None:
        raise ExperimentError("applies only to coalescence", key="--ringing-at")
    if o["second_radius"] is not None:
        raise ExperimentError("applies only to coalescence", key="--second-radius")
    row = o["substrate_row"]
    if row is not None and not 0.0 < row < o["size"][0] - 2:
        raise ExperimentError("must lie inside the frame", key="--substrate-row", value=row)
    return synth.Spreading(
        view=o["view"],
        drop_radius=o["drop_radius"],
        reflectivity=o["reflectivity"],
        approach_speed=o["approach_speed"],
        substrate_row_px=row,
    )


def _law(o, setup):
    """The radius law of the options `o`: ``--law``, handing over to ``--then`` if given."""
    from .. import synth
    from ..synth._presets import default_law_name

    name = o["law"] or default_law_name(o["geometry"])
    if name == "power":
        if o["exponent"] is None or o["prefactor"] is None:
            raise ExperimentError("needs --exponent and --prefactor", key="--law", value="power")
        first = synth.power_law(prefactor=o["prefactor"], exponent=o["exponent"])
    elif o["exponent"] is not None:
        raise ExperimentError("applies only to --law power", key="--exponent")
    else:
        first = _regime_law(o, setup, name, o["prefactor"])
    if o["then"] is None:
        if o["then_prefactor"] is not None:
            raise ExperimentError("applies only with --then", key="--then-prefactor")
        law = first
    else:
        law = synth.harmonic_blend(first, _regime_law(o, setup, o["then"], o["then_prefactor"]))
    if o["ringing_at"] is None:
        return law
    end = synth.time_at_radius(law, o["ringing_at"] * min(setup.radii))
    return synth.ringing_tail(law, end_time=end, rest_ratio=o["ringing_rest"])


def _regime_law(o, setup, name, prefactor):
    """The law of regime `name` for the material values of the options `o`."""
    from .. import synth

    return synth.regime_law(
        name,
        surface_tension=o["surface_tension"],
        viscosity=o["viscosity"],
        density=o["density"],
        outer_viscosity=o["outer_viscosity"],
        drop_radius=setup.effective_radius,
        prefactor=prefactor,
    )


def _write(ctx, recording, out, o):
    """Render and write `recording` to `out`; a folder of frames is published whole."""
    from .. import synth
    from ._synth_folder import is_folder_output, staged_synth_folder

    def write(where, overwrite):
        with progress_bar(ctx, "rendering", recording.frames) as progress:
            return synth.write_recording(
                recording,
                where,
                format=o["fmt"],
                overwrite=overwrite,
                progress=progress,
                bit_rate=o["bit_rate"],
                jpeg_quality=o["jpeg_quality"],
            )

    if not is_folder_output(out, o["fmt"]):
        return write(out, o["overwrite"])
    with staged_synth_folder(out, o["overwrite"]) as stage:
        written = write(stage, False)
    folder = Path(out)
    return dataclasses.replace(
        written,
        frames=folder,
        experiment=folder / written.experiment.name,
        truth=folder / written.truth.name,
    )


def _synth(ctx, out, o):
    import time

    from .. import synth
    from ..synth._presets import noise_sensor

    setup = _setup(o)
    law = _law(o, setup)
    recording = synth.synthesize(
        setup,
        law,
        camera=synth.Camera(o["frame_rate"], o["pixel_size"], o["size"]),
        frames=o["frames"],
        contact_frame=o["contact_frame"],
        optics=synth.Optics(
            blur_px=o["blur"], dust_count=o["dust"], contrast=o["contrast"], glow=o["glow"]
        ),
        sensor=noise_sensor(o["noise"], bit_depth=int(o["bit_depth"])),
        liquid=synth.Liquid(
            name=o["liquid_name"] or None,
            surface_tension=o["surface_tension"],
            viscosity=o["viscosity"],
            density=o["density"],
            temperature=o["temperature"],
            glycerol_mass_fraction=o["glycerol_mass_fraction"],
        ),
        medium=synth.Medium(viscosity=o["outer_viscosity"], density=o["outer_density"]),
        seed=o["seed"],
    )
    start = time.perf_counter()
    written = _write(ctx, recording, out, o)
    elapsed = time.perf_counter() - start
    truth = recording.truth
    rows, cols = o["size"]
    click.echo(
        f"wrote {recording.frames} frames ({rows} x {cols}, {o['bit_depth']}-bit"
        f" {written.format}) to {written.frames} in {elapsed:.1f} s; {law.name} law,"
        f" contact at frame {truth.contact_frame:g} (t0 = {truth.contact_time:.4g} s),"
        f" radius {truth.radius[-1] / o['pixel_size']:.1f} px at the last frame;"
        f" truth in {written.truth.name}"
    )
