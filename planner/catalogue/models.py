"""Tube current models for one section, all voltages relative to its cathode.

Triode (N. Koren, "Improved VT models for SPICE simulations", Glass Audio
1996, eq. for the triode)::

    E1 = (Ep / kp) * ln(1 + exp(kp * (1/mu + (Eg + vct) / sqrt(kvb + Ep^2))))
    Ip = 2 * E1^ex / kg1                     (Koren's (1 + sgn E1) factor)
    Ip = Ip * E1^2 / (E1^2 + tail_volts^2)   (our tail knee, when given)

``vct`` (Koren's contact-potential offset, as in his later triode sets) is
0 when not given. The tail knee is our addition: Koren's soft rounding
gives an exponential tail that falls too slowly for the published curves of
some types (their current vanishes 2 to 3 V before the plain model's 10 uA
cut-off); the factor is 1 to within 1e-3 once E1 exceeds 30 tail_volts and
steepens the tail below. Both fitted by benchmarks/fit_koren.py.

Pentode (Koren 1996, eq. for the pentode)::

    E1  = (Eg2 / kp) * ln(1 + exp(kp * (1/mu + Eg1 / Eg2)))
    Ip  = 2 * E1^ex / kg1 * atan(Ep / kvb)
    Ig2 = E1^ex / kg2

Koren writes the screen current as (Eg1 + Eg2/mu)^ex / kg2; E1 is the same
quantity with the same soft rounding at cut-off as the plate current, so the
screen current stays smooth and positive (our one change to his equations).

Child-Langmuir fallback (three-halves law, C. D. Child 1911, I. Langmuir
1913): ``Ip = perveance * max(0, Eg + Ep/mu)^1.5``; a diode is the same law
on its anode voltage, ``I = perveance * max(0, Ed)^1.5``.

Dual-control sections (g1 and g3 both control the plate current: 6AS6
suppressor gating, 5915 / 6CS6 heptodes) use the pentode equation for the
current leaving the cathode towards the plate and a gating factor G of the
second control grid (our model, stated here):

    z  = (Eg3 - V0) / (-V0)                  (1 at Eg3 = 0, 0 at Eg3 = V0)
    u  = (softplus(12 z) / 12)^x3
    G  = u / (1 + u^4)^(1/4)                 (rises smoothly from ~0 to 1)
    Ip = Ip_pentode * G
    Ig2 = Ig2_pentode + Ip_pentode * (1 - G)

Assumptions: g3 does not change the cathode current (it sits behind the
screen and only divides the stream between plate and screen), so current
turned back from the plate lands on the screen; G reaches 1 only for g3
well positive, and is 0.84 at g3 = 0 V (the fitted kg1 absorbs this); the
rounding constant 12 makes G a few thousandths at ``V0`` so the current
falls to micro-amperes there; ``V0`` and ``x3`` are fitted to the
datasheet's plate current at the typical g3 bias and its g3 cut-off figure.

Every function is smooth (continuous first derivative) and monotone: plate
current rises with plate, screen, g1 and g3 voltage. The same equations are
written as SPICE B-sources by ``planner.catalogue.spice``.
"""

from __future__ import annotations

import math

from .types import ModelParams, TubeType

CUTOFF_AMPS = 10e-6
"""Plate current that defines cut-off in ``cutoff_grid_volts`` (10 uA)."""

G3_ROUNDING = 12.0
"""Rounding constant of the g3 gating factor (see module docstring)."""

G3_SATURATION_POWER = 4.0
"""Power n in G = u / (1 + u^n)^(1/n)."""


def softplus(x: float) -> float:
    """ln(1 + exp(x)) without overflow.

    >>> round(softplus(0.0), 6), softplus(800.0)
    (0.693147, 800.0)
    """
    return max(x, 0.0) + math.log1p(math.exp(-abs(x)))


def _koren_e1(model: ModelParams, volts: float, grid_volts: float, triode: bool) -> float:
    """Koren's E1 for a triode (volts = plate) or pentode (volts = screen)."""
    if volts <= 0.0:
        return 0.0
    if triode:
        arg = 1.0 / model.mu + (grid_volts + (model.vct or 0.0)) / math.sqrt(model.kvb + volts * volts)
    else:
        arg = 1.0 / model.mu + grid_volts / volts
    return volts / model.kp * softplus(model.kp * arg)


def _three_halves(x: float) -> float:
    return x**1.5 if x > 0.0 else 0.0


def g3_gate(model: ModelParams, grid3_volts: float) -> float:
    """Gating factor G of the second control grid (module docstring), in [0, 1).

    >>> from planner.catalogue.types import ModelParams
    >>> m = ModelParams("koren-pentode", g3_zero_volts=-10.0, g3_ex=1.5)
    >>> round(g3_gate(m, 0.0), 3), g3_gate(m, -12.0) < 1e-3
    (0.841, True)
    """
    v0 = model.g3_zero_volts
    z = (grid3_volts - v0) / (-v0)
    u = (softplus(G3_ROUNDING * z) / G3_ROUNDING) ** model.g3_ex
    n = G3_SATURATION_POWER
    return u / (1.0 + u**n) ** (1.0 / n)


def _model(tube: TubeType | ModelParams) -> ModelParams:
    return tube if isinstance(tube, ModelParams) else tube.model


def _name(tube: TubeType | ModelParams) -> str:
    return tube.equation if isinstance(tube, ModelParams) else tube.name


def _screen_volts(tube, screen_volts: float | None) -> float:
    if screen_volts is None:
        raise ValueError(f"{_name(tube)} has a screen grid: give screen_volts")
    return screen_volts


def _pentode_parts(tube, plate_volts: float, grid_volts: float, screen_volts: float):
    """(plate current, screen current) of the Koren pentode, no g3 gating."""
    m = _model(tube)
    e1x = _koren_e1(m, screen_volts, grid_volts, triode=False) ** m.ex
    ip = 2.0 * e1x / m.kg1 * math.atan(plate_volts / m.kvb) if plate_volts > 0.0 else 0.0
    return ip, e1x / m.kg2


def _is_dual(tube) -> bool:
    return _model(tube).g3_zero_volts is not None


def plate_current_amps(
    tube: TubeType | ModelParams,
    *,
    plate_volts: float,
    grid_volts: float,
    grid3_volts: float = 0.0,
    screen_volts: float | None = None,
) -> float:
    """Plate current in amperes of one section of ``tube`` (voltages to cathode).

    ``tube`` is a ``TubeType`` or its ``ModelParams`` (as when fitting).
    The model follows ``tube.model.equation`` (module docstring); a diode
    section's current is its anode current at ``plate_volts`` (grids
    ignored). ``grid3_volts`` matters only for dual-control sections;
    ``screen_volts`` is required for sections with a screen. Cost O(1).

    >>> from planner.catalogue import builtin_catalogue
    >>> t = builtin_catalogue().get("12AU7")
    >>> 0.009 < plate_current_amps(t, plate_volts=250, grid_volts=-8.5) < 0.012
    True
    """
    m = _model(tube)
    if m.equation == "koren-triode":
        if plate_volts <= 0.0:
            return 0.0
        e1 = _koren_e1(m, plate_volts, grid_volts, triode=True)
        tail = 1.0 if m.tail_volts is None else e1 * e1 / (e1 * e1 + m.tail_volts**2)
        return 2.0 * e1**m.ex / m.kg1 * tail
    if m.equation == "koren-pentode":
        ip, _ = _pentode_parts(tube, plate_volts, grid_volts, _screen_volts(tube, screen_volts))
        return ip * g3_gate(m, grid3_volts) if _is_dual(tube) else ip
    if m.equation == "child-langmuir":
        if plate_volts <= 0.0:
            return 0.0
        return m.perveance * _three_halves(grid_volts + plate_volts / m.mu)
    if m.equation == "diode":
        return m.perveance * _three_halves(plate_volts)
    raise ValueError(f"{_name(tube)}: unknown model equation {m.equation!r}")


def screen_current_amps(
    tube: TubeType | ModelParams,
    *,
    plate_volts: float,
    grid_volts: float,
    grid3_volts: float = 0.0,
    screen_volts: float | None = None,
) -> float:
    """Screen current in amperes of one section; 0 for sections without a screen.

    For dual-control sections it includes the current that g3 turns back
    from the plate (module docstring). Cost O(1).
    """
    m = _model(tube)
    if m.equation != "koren-pentode":
        return 0.0
    ip, ig2 = _pentode_parts(tube, plate_volts, grid_volts, _screen_volts(tube, screen_volts))
    if _is_dual(tube):
        return ig2 + ip * (1.0 - g3_gate(m, grid3_volts))
    return ig2


def grid_current_amps(tube: TubeType | ModelParams, *, grid_volts: float) -> float:
    """Control-grid current in amperes for a grid positive to the cathode.

    Three-halves law of the grid-cathode diode with ``model.grid_perveance``;
    0 for a negative grid or when the type has no grid-current model.
    Contact potential and initial-velocity current are neglected. Cost O(1).
    """
    k = _model(tube).grid_perveance
    return 0.0 if k is None else k * _three_halves(grid_volts)


def cutoff_grid_volts(
    tube: TubeType | ModelParams,
    *,
    plate_volts: float,
    screen_volts: float | None = None,
    grid3: bool = False,
    other_grid_volts: float = 0.0,
    threshold_amps: float = CUTOFF_AMPS,
) -> float:
    """Grid voltage (to cathode) at which the plate current falls to ``threshold_amps``.

    ``grid3=False``: the g1 voltage, with g3 at ``other_grid_volts`` on a
    dual-control section. ``grid3=True``: the g3 voltage with g1 at
    ``other_grid_volts`` (dual-control sections only). The default threshold
    is ``CUTOFF_AMPS`` (10 uA), the figure datasheets use for "grid voltage
    for plate current cut-off". Plate current is monotone in the grid voltage, so this
    is bisection on [-(plate + screen volts) - 100, 0] to 1 mV: about 20
    model evaluations. Raises ValueError if the section is below the
    threshold even at 0 V or has no grid.
    """
    if _model(tube).equation == "diode":
        raise ValueError(f"{_name(tube)} is a diode: it has no grid")
    if grid3 and not _is_dual(tube):
        raise ValueError(f"{_name(tube)} has no second control grid")

    def current(v: float) -> float:
        if grid3:
            return plate_current_amps(tube, plate_volts=plate_volts, grid_volts=other_grid_volts,
                                      grid3_volts=v, screen_volts=screen_volts)
        return plate_current_amps(tube, plate_volts=plate_volts, grid_volts=v,
                                  grid3_volts=other_grid_volts, screen_volts=screen_volts)

    hi = 0.0
    if current(hi) <= threshold_amps:
        raise ValueError(f"{_name(tube)}: plate current is below {threshold_amps} A even at 0 V grid")
    lo = -(abs(plate_volts) + abs(screen_volts or 0.0)) - 100.0
    while hi - lo > 1e-3:
        mid = 0.5 * (lo + hi)
        if current(mid) > threshold_amps:
            hi = mid
        else:
            lo = mid
    return 0.5 * (lo + hi)
