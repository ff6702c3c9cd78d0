"""IEEE Std 519 harmonic limits and pass/fail checks.

Tables (IEEE Std 519-2014, §5):

* Table 1 — voltage distortion at the point of common coupling (PCC), by bus voltage:
  individual harmonic (%) and THD (%).
* Table 2 — current distortion, 120 V to 69 kV; Table 3 — 69 kV to 161 kV (Table 2
  halved); Table 4 — above 161 kV. Limits in % of the maximum demand load current I_L,
  by Isc/I_L row and odd-order band; TDD limit per row.

Conventions used here (state them wherever the results appear):

* Isc/I_L rows are read as half-open intervals [20, 50), [50, 100), [100, 1000), ≥ 1000;
  below 20 the first row applies (Table 4: [25, 50), ≥ 50).
* Order bands 3 ≤ h < 11, 11 ≤ h < 17, 17 ≤ h < 23, 23 ≤ h < 35, 35 ≤ h ≤ 50; orders 2
  (below the first band) use the first band; orders above 50 are not limited.
* Even harmonics: 2014 edition — 25 % of the odd limit of their band; 2022 edition — 50 %
  for h ≤ 6 and 100 % for h > 6 (the 2022 change, from secondary summaries of it).
* THD/TDD count integer harmonics 2…50; interharmonics and DC are excluded (a DC offset
  from current distortion is not allowed at all by the standard).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..tables import FREQ_RANGE_HZ
from ..units import check_scalar

__all__ = [
    "CurrentCheck",
    "VoltageCheck",
    "check_current",
    "check_voltage",
    "current_limit_pct",
    "tdd_limit_pct",
    "voltage_limits_pct",
]

# IEEE Std 519-2014 Table 1: (upper bound of bus kV, individual %, THD %)
_TABLE1 = ((1.0, 5.0, 8.0), (69.0, 3.0, 5.0), (161.0, 1.5, 2.5), (float("inf"), 1.0, 1.5))

# IEEE Std 519-2014 Table 2 (120 V – 69 kV): lower bound of Isc/IL, five band limits, TDD
_TABLE2 = (
    (0.0, (4.0, 2.0, 1.5, 0.6, 0.3), 5.0),
    (20.0, (7.0, 3.5, 2.5, 1.0, 0.5), 8.0),
    (50.0, (10.0, 4.5, 4.0, 1.5, 0.7), 12.0),
    (100.0, (12.0, 5.5, 5.0, 2.0, 1.0), 15.0),
    (1000.0, (15.0, 7.0, 6.0, 2.5, 1.4), 20.0),
)
# Table 3 (69 – 161 kV): Table 2 halved (its < 20 row: 2.0 / 1.0 / 0.75 / 0.3 / 0.15, TDD 2.5)
_TABLE3 = tuple((lo, tuple(v / 2 for v in band), tdd / 2) for lo, band, tdd in _TABLE2)
# Table 4 (> 161 kV). The < 25 row is from a transcription of the standard; the other two
# rows are from memory (not re-checked against the standard).
_TABLE4 = (
    (0.0, (1.0, 0.5, 0.38, 0.15, 0.1), 1.5),
    (25.0, (2.0, 1.0, 0.75, 0.3, 0.15), 2.5),  # from memory
    (50.0, (3.0, 1.5, 1.15, 0.45, 0.22), 3.75),  # from memory
)
_BANDS = (11, 17, 23, 35, 51)  # exclusive upper bounds of the five odd-order bands
BUS_KV_RANGE = (1e-3, 2000.0)  # 1 V … 2000 kV (above any transmission voltage)
ISC_IL_RANGE = (1e-6, 1e7)


def _bus_kv(bus_kv: float) -> float:
    return check_scalar(bus_kv, "bus_kv", *BUS_KV_RANGE, "a bus voltage in kV")


def voltage_limits_pct(bus_kv: float) -> tuple[float, float]:
    """(individual %, THD %) of IEEE Std 519-2014 Table 1 for a PCC bus voltage in kV."""
    bus_kv = _bus_kv(bus_kv)
    for hi, ind, thd in _TABLE1:
        if bus_kv <= hi:
            return ind, thd
    raise AssertionError("unreachable")  # pragma: no cover


def _current_table(bus_kv: float) -> tuple[tuple[float, tuple[float, ...], float], ...]:
    bus_kv = _bus_kv(bus_kv)
    if bus_kv <= 69.0:
        return _TABLE2
    if bus_kv <= 161.0:
        return _TABLE3
    return _TABLE4


def _row(isc_il: float, bus_kv: float) -> tuple[tuple[float, ...], float]:
    isc_il = check_scalar(isc_il, "isc_il", *ISC_IL_RANGE, "a ratio Isc/IL")
    table = _current_table(bus_kv)
    chosen = table[0]
    for row in table:
        if isc_il >= row[0]:
            chosen = row
    return chosen[1], chosen[2]


def _ratio_text(isc_il: float, bus_kv: float) -> str:
    """Isc/IL to three significant figures, or as many more as it takes for the shown value
    to fall in the same row of the table as the value itself (19.996 is not shown as 20)."""
    row = _row(isc_il, bus_kv)
    for digits in range(3, 17):
        text = f"{isc_il:.{digits}g}"
        if _row(float(text), bus_kv) == row:
            return text
    return repr(isc_il)


def current_limit_pct(
    h: int, isc_il: float, bus_kv: float = 13.8, edition: int = 2014
) -> float | None:
    """Limit for harmonic order ``h`` in % of I_L; None above order 50 (not limited)."""
    if isinstance(edition, bool) or edition not in (2014, 2022):
        raise InputError("argument", None, "edition", edition, "expected 2014 or 2022")
    h_num = check_scalar(h, "order", 2.0, 1e6, "a whole harmonic order")
    if not h_num.is_integer():
        raise InputError("argument", None, "order", h, "expected a whole harmonic order ≥ 2")
    h = int(h_num)
    if h > 50:
        _row(isc_il, bus_kv)  # the other arguments are still checked
        return None
    bands, _tdd = _row(isc_il, bus_kv)
    k = next(i for i, hi in enumerate(_BANDS) if h < hi)
    limit = bands[k]
    if h % 2 == 0:
        if edition == 2014:
            limit *= 0.25
        else:
            limit *= 0.5 if h <= 6 else 1.0
    return limit


def tdd_limit_pct(isc_il: float, bus_kv: float = 13.8) -> float:
    """TDD limit in % of I_L (IEEE Std 519-2014 Tables 2–4, last column)."""
    return _row(isc_il, bus_kv)[1]


@dataclass(frozen=True)
class VoltageCheck:
    """Rows ``(label, value %, limit %, passed)`` and the overall verdict."""

    rows: tuple[tuple[str, float, float, bool], ...]
    passed: bool
    basis: str


@dataclass(frozen=True)
class CurrentCheck:
    rows: tuple[tuple[str, float, float, bool], ...]
    passed: bool
    basis: str


def _harmonic_rms(freqs_hz: np.ndarray, rms: np.ndarray, f1: float) -> dict[int, float]:
    f1 = check_scalar(f1, "fundamental_hz", *FREQ_RANGE_HZ, "a fundamental in Hz")
    freqs_hz = np.asarray(freqs_hz, dtype=float).reshape(-1)
    rms = np.asarray(rms, dtype=float).reshape(-1)
    if freqs_hz.size != rms.size:
        raise InputError(
            "argument",
            None,
            "rms",
            None,
            f"expected one value per frequency: {freqs_hz.size} frequencies, {rms.size} values",
        )
    if not (np.all(np.isfinite(freqs_hz)) and np.all(np.isfinite(rms)) and np.all(rms >= 0)):
        raise InputError("argument", None, "rms", None, "expected finite values ≥ 0")
    order = freqs_hz / f1
    out: dict[int, float] = {}
    for o, r in zip(order, rms, strict=True):
        h = round(o)
        if h >= 1 and abs(o - h) <= 1e-6 * max(o, 1):
            out[h] = out.get(h, 0.0) + float(r)
    return out


def check_voltage(
    freqs_hz: np.ndarray, rms: np.ndarray, fundamental_hz: float, bus_kv: float
) -> VoltageCheck:
    """Individual harmonics 2…50 and THD of a bus voltage against Table 1.

    ``rms`` are per-frequency RMS values (any unit); percentages are of the fundamental.
    """
    ind, thd_lim = voltage_limits_pct(bus_kv)
    hv = _harmonic_rms(np.asarray(freqs_hz), np.asarray(rms), fundamental_hz)
    v1 = hv.get(1, 0.0)
    if v1 <= 0:
        raise InputError(
            "argument", None, None, None, f"no voltage at the fundamental ({fundamental_hz:g} Hz)"
        )
    rows = []
    for h in sorted(k for k in hv if 2 <= k <= 50):
        pct = 100 * hv[h] / v1
        rows.append((f"h{h}", pct, ind, pct <= ind))
    thd = 100 * float(np.sqrt(sum(hv[h] ** 2 for h in hv if 2 <= h <= 50))) / v1
    rows.append(("THD", thd, thd_lim, thd <= thd_lim))
    basis = (
        f"IEEE Std 519-2014 Table 1, bus {bus_kv:g} kV: % of the fundamental; harmonics 2-50, "
        "DC and interharmonics excluded"
    )
    return VoltageCheck(tuple(rows), all(r[3] for r in rows), basis)


def check_current(
    freqs_hz: np.ndarray,
    rms: np.ndarray,
    fundamental_hz: float,
    i_l: float,
    isc_il: float,
    bus_kv: float,
    edition: int = 2014,
) -> CurrentCheck:
    """Individual harmonics and TDD of a current (per-frequency RMS) against Tables 2–4.

    Percentages are of ``i_l``, the maximum demand load current (RMS, same unit).
    """
    i_l = check_scalar(i_l, "i_l", 0.0, 1e24, "the demand current I_L", lo_open=True)
    hv = _harmonic_rms(np.asarray(freqs_hz), np.asarray(rms), fundamental_hz)
    rows = []
    for h in sorted(k for k in hv if 2 <= k <= 50):
        pct = 100 * hv[h] / i_l
        lim = current_limit_pct(h, isc_il, bus_kv, edition)
        assert lim is not None  # orders 2…50 are limited
        rows.append((f"h{h}", pct, lim, pct <= lim))
    tdd = 100 * float(np.sqrt(sum(hv[h] ** 2 for h in hv if 2 <= h <= 50))) / i_l
    tdd_lim = tdd_limit_pct(isc_il, bus_kv)
    rows.append(("TDD", tdd, tdd_lim, tdd <= tdd_lim))
    f = np.asarray(freqs_hz)
    dc = float(np.asarray(rms)[f == 0].sum()) if np.any(f == 0) else 0.0
    if dc > 0:
        rows.append(("DC", 100 * dc / i_l, 0.0, False))
    basis = (
        f"IEEE Std 519-{edition} Tables 2-4, bus {bus_kv:g} kV, Isc/IL {_ratio_text(isc_il, bus_kv)}:"
        " % of I_L; "
        f"even orders {'25 %' if edition == 2014 else '50 % (h<=6) / 100 %'} of the odd limit"
    )
    return CurrentCheck(tuple(rows), all(r[3] for r in rows), basis)
