"""``fleetsim life`` and ``fleetsim size``: one bearing position, forwards and backwards."""

from __future__ import annotations

import math
from typing import Any

import click

from fleetsim import SAFETY_CAUTION
from fleetsim.bounds import APPLICATION_FACTOR, ROTATION_FACTOR, VISCOSITY_RATIO
from fleetsim.cli.common import echo_json, fmt, positive, quantity, table
from fleetsim.errors import InputError
from fleetsim.life import (
    Arrangement,
    BearingRating,
    BearingType,
    DutyStep,
    LoadFactors,
    Lubrication,
    position_life,
    read_catalogue,
    required_dynamic_rating,
    select_bearing,
    warn_reliability_range,
)

TYPE_CHOICE = click.Choice([k.value for k in BearingType])
ARRANGEMENT_CHOICE = click.Choice([a.value for a in Arrangement])
MODEL_CHOICE = click.Choice(["iso281", "textbook"])


def _reliability(value: float, option: str = "--reliability") -> float:
    if not (0.0 < value < 1.0):
        raise InputError(option, f"expected a reliability strictly between 0 and 1, got {value:g}")
    return value


def _relabel(exc: InputError, mapping: dict[str, str]) -> InputError:
    """Name the command-line option in an error raised by the library."""
    return InputError(mapping.get(exc.where, exc.where), exc.expected)


_LIFE_OPTIONS = {
    "radial load": "--radial-load",
    "axial load": "--axial-load",
    "static rating": "--static-rating",
    "dynamic rating": "--dynamic-rating",
    "fatigue limit": "--fatigue-limit",
    "viscosity ratio": "--viscosity-ratio",
    "contamination": "--contamination",
    "speed": "--speed",
    "duty[0].speed": "--speed",
    "reliability": "--reliability",
    "load": "--load",
    "life": "--life",
    "model": "--model",
    "bearing": "--e",
    "arrangement": "--arrangement",
    "radial load b": "--radial-load-b",
}


@click.command()
@click.option("--type", "bearing_type", type=TYPE_CHOICE, required=True,
              help="ball (radial deep-groove), roller (cylindrical, radial load only), "
                   "angular-contact-ball or tapered-roller (these two need --e, --X, --Y).")
@click.option("--dynamic-rating", required=True, help="Basic dynamic load rating C, e.g. '30.7 kN'.")
@click.option("--static-rating", default=None, help="Basic static load rating C0, e.g. '19 kN'.")
@click.option("--radial-load", required=True, help="Radial load Fr, e.g. '3.2 kN' or '720 lbf'.")
@click.option("--axial-load", default="0 N", show_default=True, help="Axial load Fa.")
@click.option("--speed", required=True, help="Speed, e.g. '1480 rpm'.")
@click.option("--reliability", type=float, default=0.9, show_default=True,
              help="Reliability for the life at reliability, in (0, 1).")
@click.option("--at", "at", default=None, help="Report the reliability at this life, e.g. '20000 h'.")
@click.option("--model", type=MODEL_CHOICE, default="iso281", show_default=True,
              help="Life distribution in units of L10.")
@click.option("--application-factor", type=float, default=1.0, show_default=True,
              help="Load (application) factor a_f multiplying P.")
@click.option("--rotation-factor", type=float, default=1.0, show_default=True,
              help="Rotation factor V (1 = rotating inner ring).")
@click.option("--viscosity-ratio", type=float, default=None, help="κ = ν/ν1, for a_ISO.")
@click.option("--contamination", type=float, default=None, help="Contamination factor e_C in [0, 1].")
@click.option("--fatigue-limit", default=None, help="Fatigue load limit Cu, e.g. '1.3 kN'.")
@click.option("--e", "factor_e", type=float, default=None,
              help="Catalogue e (angular-contact-ball, tapered-roller).")
@click.option("--X", "factor_x", type=float, default=None, help="Catalogue X, used above e.")
@click.option("--Y", "factor_y", type=float, default=None, help="Catalogue Y, used above e.")
@click.option("--Y1", "factor_y1", type=float, default=None,
              help="Catalogue Y1 of a double-row bearing, used at or below e (X1 = 1).")
@click.option("--Y0", "factor_y0", type=float, default=None,
              help="Catalogue static factor Y0 (default: ISO 76 from e).")
@click.option("--arrangement", type=ARRANGEMENT_CHOICE, default="single", show_default=True,
              help="How the bearings are mounted; face-to-face and back-to-back are an "
                   "opposed pair A, B with the axial load as external thrust on A.")
@click.option("--radial-load-b", default=None,
              help="Radial load of bearing B of a face-to-face or back-to-back pair.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON object.")
def life(
    bearing_type: str,
    dynamic_rating: str,
    static_rating: str | None,
    radial_load: str,
    axial_load: str,
    speed: str,
    reliability: float,
    at: str | None,
    model: str,
    application_factor: float,
    rotation_factor: float,
    viscosity_ratio: float | None,
    contamination: float | None,
    fatigue_limit: str | None,
    factor_e: float | None,
    factor_x: float | None,
    factor_y: float | None,
    factor_y1: float | None,
    factor_y0: float | None,
    arrangement: str,
    radial_load_b: str | None,
    as_json: bool,
) -> None:
    """Rating life and life distribution of one bearing position (or arrangement)."""
    c = positive(quantity(dynamic_rating, "force", "--dynamic-rating"), "--dynamic-rating", "rating")
    c0 = positive(quantity(static_rating, "force", "--static-rating"), "--static-rating", "rating")
    fr = quantity(radial_load, "force", "--radial-load")
    fa = quantity(axial_load, "force", "--axial-load")
    n = positive(quantity(speed, "speed", "--speed"), "--speed", "speed")
    cu = positive(quantity(fatigue_limit, "force", "--fatigue-limit"), "--fatigue-limit", "load")
    at_h = positive(quantity(at, "time", "--at"), "--at", "life")
    fr_b = quantity(radial_load_b, "force", "--radial-load-b")
    if fr_b is not None and fr_b < 0:
        raise InputError("--radial-load-b", f"expected a load >= 0, got {fr_b:g} N")
    factors = _catalogue_factors(bearing_type, factor_e, factor_x, factor_y, factor_y1, factor_y0)
    _reliability(reliability)
    APPLICATION_FACTOR.check(application_factor, "--application-factor")
    ROTATION_FACTOR.check(rotation_factor, "--rotation-factor")
    if viscosity_ratio is not None:
        VISCOSITY_RATIO.check(viscosity_ratio, "--viscosity-ratio")
    assert c is not None and fr is not None and fa is not None and n is not None
    if fr < 0:
        raise InputError("--radial-load", f"expected a load >= 0, got {fr:g} N")
    if fa < 0:
        raise InputError("--axial-load", f"expected a load >= 0, got {fa:g} N")
    if fr == 0 and fa == 0:
        raise InputError("--radial-load", "expected a positive radial or axial load, got both zero")
    lub_given = [v is not None for v in (viscosity_ratio, contamination, cu)]
    if any(lub_given) and not all(lub_given):
        raise InputError(
            "--viscosity-ratio",
            "a_ISO needs all of --viscosity-ratio, --contamination and --fatigue-limit",
        )
    lubrication = None
    if all(lub_given):
        assert viscosity_ratio is not None and contamination is not None
        lubrication = Lubrication(viscosity_ratio, contamination)
    if bearing_type == "ball" and fa > 0 and c0 is None:
        raise InputError("--static-rating", "a ball bearing with axial load needs C0, e.g. '19 kN'")
    try:
        rating = BearingRating(BearingType(bearing_type), c, c0, cu, factors)
        res = position_life(
            rating,
            [DutyStep(1.0, fr, fa, n, fr_b)],
            model=model,
            rotation_factor=rotation_factor,
            application_factor=application_factor,
            lubrication=lubrication,
            arrangement=arrangement,
        )
    except InputError as exc:
        raise _relabel(exc, _LIFE_OPTIONS) from None
    warn_reliability_range(reliability, model)

    dist = res.distribution
    basic_life_at_r = res.model.life_ratio(reliability) * res.rating_life_h
    out: dict[str, Any] = {
        "equivalent_load_N": res.equivalent_load_N,
        "e": res.e,
        "X": res.X,
        "Y": res.Y,
        "speed_rpm": res.speed_rpm,
        "rating_life_Mrev": res.rating_life_Mrev,
        "rating_life_h": res.rating_life_h,
        "reliability": reliability,
        "a1": float(res.model.life_ratio(reliability)),
        "life_at_reliability_h": float(basic_life_at_r),
        "model": model,
        "weibull": dist.as_dict(),
        "reliability_at": None,
        "at_h": at_h,
        "a_iso": res.a_iso,
        "modified_life_h": None if res.a_iso is None else res.a_iso * float(basic_life_at_r),
        "static_safety": res.static_safety,
        "static_equivalent_load_N": res.static_equivalent_load_N,
        "static_safety_factor": res.static_safety,
        "arrangement": res.arrangement.value,
        "bearings": [
            {"name": b.name, "radial_load_N": b.radial_load_N, "axial_load_N": b.axial_load_N,
             "equivalent_load_N": b.equivalent_load_N, "rating_life_h": b.rating_life_h,
             "static_equivalent_load_N": b.static_equivalent_load_N}
            for b in res.bearings
        ],
        "arrangement_life_h": res.rating_life_h,
        "caution": SAFETY_CAUTION,
    }
    if at_h is not None:
        out["reliability_at"] = float(dist.reliability(at_h))
    if as_json:
        echo_json(out)
        return
    rows = [
        ("equivalent load P", fmt(res.equivalent_load_N, ".4g", "N")),
        ("e / X / Y", f"{fmt(res.e, '.3f')} / {fmt(res.X, '.3f')} / {fmt(res.Y, '.3f')}"),
        ("rating life L10", f"{fmt(res.rating_life_Mrev, '.4g', 'million rev')}"
                            f" = {fmt(res.rating_life_h, ',.0f', 'h')}"),
        (f"a1 at R = {reliability:g}", fmt(out["a1"], ".4f")),
        (f"life at R = {reliability:g}", fmt(out["life_at_reliability_h"], ",.0f", "h")),
        (f"Weibull ({model})", f"shape {dist.shape:.4g}, scale {dist.scale_h:,.0f} h, "
                               f"location {dist.location_h:,.0f} h"),
        ("static load P0", fmt(res.static_equivalent_load_N, ".4g", "N")),
        ("static safety s0 = C0/P0", fmt(res.static_safety, ".3g")),
    ]
    if len(res.bearings) > 1:
        rows[1:1] = [
            (f"bearing {b.name}", f"Fr {b.radial_load_N:.4g} N, Fa {b.axial_load_N:.4g} N, "
                                  f"P {b.equivalent_load_N:.4g} N, L10 {b.rating_life_h:,.0f} h")
            for b in res.bearings
        ]
        rows[len(res.bearings) + 2] = (
            f"rating life L10 ({res.arrangement.value}, in series)",
            rows[len(res.bearings) + 2][1])
    if res.a_iso is not None:
        rows += [
            ("a_ISO", fmt(res.a_iso, ".4g")),
            (f"modified life at R = {reliability:g}", fmt(out["modified_life_h"], ",.0f", "h")),
        ]
    if at_h is not None:
        rows.append((f"reliability at {at_h:,.0f} h", fmt(out["reliability_at"], ".5f")))
    click.echo(table(rows, "Bearing position life"))
    click.echo(f"\n{SAFETY_CAUTION}")


def _bore_choice(text: str | None, *, scenario: bool) -> str | float | None:
    """``--bore``: keep/any (with --scenario) or a bore in mm."""
    if text is None:
        return "keep" if scenario else None
    word = text.strip().lower()
    if scenario and word in ("keep", "any"):
        return word
    try:
        value = float(word.removesuffix("mm").strip())
    except ValueError:
        value = math.nan
    if not (value > 0 and math.isfinite(value)):
        choices = "keep, any or a bore in mm" if scenario else "a bore in mm"
        raise InputError("--bore", f"expected {choices}, e.g. '50', got {text!r}")
    return value


def _catalogue_factors(
    bearing_type: str, e: float | None, x: float | None, y: float | None, y1: float | None,
    y0: float | None,
) -> LoadFactors | None:
    """e, X, Y (Y1, Y0) of a contact-angle bearing from the options; None for ball and roller."""
    given = {"--e": e, "--X": x, "--Y": y, "--Y1": y1, "--Y0": y0}
    if not BearingType(bearing_type).needs_catalogue_factors:
        extra = [k for k, v in given.items() if v is not None]
        if extra:
            raise InputError(extra[0], f"used only with angular-contact-ball or tapered-roller "
                                       f"(a {bearing_type} bearing takes ISO's factors)")
        return None
    for opt in ("--e", "--X", "--Y"):
        if given[opt] is None:
            raise InputError(opt, f"a {bearing_type} bearing needs the catalogue's e, X and Y")
    for opt, v in given.items():
        if v is not None and not (v >= 0 and v < float("inf")):
            raise InputError(opt, f"expected a factor >= 0, got {v:g}")
    assert e is not None and x is not None and y is not None
    if not e > 0:
        raise InputError("--e", f"expected e > 0, got {e:g}")
    return LoadFactors(e=e, X=x, Y=y, Y1=0.0 if y1 is None else y1, Y0=y0)


@click.command()
@click.option("--type", "bearing_type", type=TYPE_CHOICE, default=None,
              help="ball, roller, angular-contact-ball or tapered-roller (gives the life "
                   "exponent: 3 for ball, 10/3 for roller bearings).")
@click.option("--load", default=None, help="Equivalent dynamic load P, e.g. '4 kN'.")
@click.option("--speed", default=None, help="Speed, e.g. '1480 rpm'.")
@click.option("--life", "life_", required=True,
              help="Design life, e.g. '25000 h'; with --scenario, the calendar period of the target.")
@click.option("--reliability", type=float, required=True,
              help="Reliability at the design life; with --scenario, the machine-level target.")
@click.option("--model", type=MODEL_CHOICE, default="iso281", show_default=True,
              help="Life distribution in units of L10.")
@click.option("--application-factor", type=float, default=1.0, show_default=True,
              help="Load (application) factor a_f.")
@click.option("--catalog", type=click.Path(dir_okay=False), default=None,
              help="Bearing catalogue CSV to choose from.")
@click.option("--bore", default=None,
              help="Bore of the catalogue choice in mm; with --scenario 'keep' (default: "
                   "today's bore where the scenario gives bore_mm), 'any', or a bore in mm.")
@click.option("--scenario", type=click.Path(dir_okay=False), default=None,
              help="Size every position of this scenario for a machine-level target, then "
                   "simulate today's bearings and the new selection side by side.")
@click.option("--machine", "machines", multiple=True, help="With --scenario: only these machines.")
@click.option("--allocation", type=click.Choice(["equal", "cost"]), default="equal",
              show_default=True,
              help="With --scenario: share the target equally among the positions that can "
                   "change, or take the cheapest combination of bearings that meets it.")
@click.option("--replications", "-n", type=int, default=None,
              help="With --scenario: replications (default: the scenario's).")
@click.option("--out", type=click.Path(file_okay=False), default=None,
              help="With --scenario: report directory (default: reports/<study>-retrofit).")
@click.option("--quiet", "-q", is_flag=True, help="No progress notes on standard error.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON object.")
@click.option("--pdf", is_flag=True,
              help="With --scenario: also print the report to report.pdf (needs Chromium).")
def size(
    bearing_type: str | None,
    load: str | None,
    speed: str | None,
    life_: str,
    reliability: float,
    model: str,
    application_factor: float,
    catalog: str | None,
    bore: str | None,
    scenario: str | None,
    machines: tuple[str, ...],
    allocation: str,
    replications: int | None,
    out: str | None,
    quiet: bool,
    as_json: bool,
    pdf: bool,
) -> None:
    """Dynamic rating a position needs for a life at a reliability.

    With --scenario, size every position of a fleet for a machine-level
    target and simulate today's bearings against the new selection.
    """
    if scenario is None and allocation != "equal":
        raise InputError("--allocation", "used only with --scenario")
    if scenario is not None:
        from fleetsim.cli.retrofit import size_scenario

        for opt, value in (("--type", bearing_type), ("--load", load), ("--speed", speed)):
            if value is not None:
                raise InputError(opt, "not used with --scenario (loads and speeds come from the file)")
        if catalog is None:
            raise InputError("--catalog", "--scenario needs a bearing catalogue to choose from")
        bore_choice = _bore_choice(bore, scenario=True)
        assert bore_choice is not None
        if pdf:
            from fleetsim.cli.study import _check_pdf

            _check_pdf(pdf)
        size_scenario(scenario, catalog, life_, reliability, machines, replications, out, quiet,
                      as_json, bore_choice, allocation, pdf)
        return
    for opt, value in (("--type", bearing_type), ("--load", load), ("--speed", speed)):
        if value is None:
            raise InputError(opt, "required (or give --scenario)")
    assert bearing_type is not None
    p = positive(quantity(load, "force", "--load"), "--load", "load")
    n = positive(quantity(speed, "speed", "--speed"), "--speed", "speed")
    life_h = positive(quantity(life_, "time", "--life"), "--life", "life")
    _reliability(reliability)
    APPLICATION_FACTOR.check(application_factor, "--application-factor")
    assert p is not None and n is not None and life_h is not None
    warn_reliability_range(reliability, model)
    required = required_dynamic_rating(
        p, n, life_h, reliability,
        bearing_type=bearing_type, model=model, application_factor=application_factor,
    )
    selected: dict[str, Any] | None = None
    if catalog is not None:
        try:
            entries = read_catalogue(catalog)
        except InputError as exc:
            raise InputError(f"--catalog {exc.where}", exc.expected) from None
        bore_mm = _bore_choice(bore, scenario=False)
        assert not isinstance(bore_mm, str)
        pick = select_bearing(entries, required, bearing_type, bore_mm=bore_mm)
        if pick is not None:
            selected = {
                "designation": pick.designation,
                "type": pick.bearing_type.value,
                "dynamic_rating_N": pick.dynamic_rating_N,
                "static_rating_N": pick.static_rating_N,
                "bore_mm": pick.bore_mm,
                "price": pick.price,
                "margin": pick.dynamic_rating_N / required,
            }
    result = {
        "required_dynamic_rating_N": required,
        "load_N": p,
        "speed_rpm": n,
        "life_h": life_h,
        "reliability": reliability,
        "model": model,
        "application_factor": application_factor,
        "selected": selected,
        "catalog": catalog,
        "caution": SAFETY_CAUTION,
    }
    if as_json:
        echo_json(result)
        return
    rows = [
        ("required dynamic rating C", fmt(required / 1e3, ".4g", "kN")),
        ("for", f"{life_h:,.0f} h at R = {reliability:g}, {n:g} rpm, P = {p / 1e3:.4g} kN"
                f" × a_f {application_factor:g} ({model})"),
    ]
    if catalog is not None:
        if selected is None:
            rows.append(("selected", f"none of the {bearing_type} bearings in the catalogue is enough"))
        else:
            rows.append(("selected", f"{selected['designation']}: C = "
                                     f"{selected['dynamic_rating_N'] / 1e3:.4g} kN "
                                     f"(margin {selected['margin']:.2f}×)"))
    click.echo(table(rows, "Required rating"))
    click.echo(f"\n{SAFETY_CAUTION}")
