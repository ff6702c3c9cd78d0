"""Equipment tables for the three-phase tests (invented plants, not data of any site)."""

from __future__ import annotations

from typing import Any

HEADER = [
    "name",
    "kind",
    "bus",
    "bus_to",
    "kv",
    "mva_sc",
    "x_r",
    "mva_sc_1ph",
    "kva",
    "kv_hv",
    "kv_lv",
    "z_pct",
    "z0_pct",
    "connection",
    "length_km",
    "r_ohm_km",
    "x_ohm_km",
    "c_uf_km",
    "r0_ohm_km",
    "x0_ohm_km",
    "kvar",
    "steps",
    "steps_on",
    "tuned_order",
    "p_pct",
    "q_factor",
    "x_pct",
    "kw",
    "pf",
    "model",
    "pulses",
    "spectrum",
]
OPTIONS = {"fundamental_hz": 60.0}


def row(**kw: Any) -> list[Any]:
    unknown = set(kw) - set(HEADER)
    assert not unknown, unknown
    return [kw.get(h) for h in HEADER]


def table(*rows: list[Any]) -> list[list[Any]]:
    return [list(HEADER), *rows]


def supply(name="U1", bus="PCC", kv=13.8, mva_sc=250.0, x_r=12.0, **kw):
    return row(name=name, kind="supply", bus=bus, kv=kv, mva_sc=mva_sc, x_r=x_r, **kw)


def transformer(
    name, bus, bus_to, connection, kva=2000.0, kv_hv=13.8, kv_lv=0.48, z_pct=5.75, x_r=8.0, **kw
):
    return row(
        name=name,
        kind="transformer",
        bus=bus,
        bus_to=bus_to,
        kva=kva,
        kv_hv=kv_hv,
        kv_lv=kv_lv,
        z_pct=z_pct,
        x_r=x_r,
        connection=connection,
        **kw,
    )


def converter(name, bus, kw=800.0, pf=0.95, kv=0.48, **more):
    return row(name=name, kind="converter", bus=bus, kv=kv, kw=kw, pf=pf, **more)


def twelve_pulse(kw: float = 800.0) -> list[list[Any]]:
    """Two identical six-pulse converters behind a Dyn11 and a Yyn0 transformer of equal
    ratings on one 13.8 kV bus fed by the supply."""
    return table(
        supply(),
        transformer("T1", "PCC", "LV1", "Dyn11"),
        transformer("T2", "PCC", "LV2", "Yyn0"),
        converter("D1", "LV1", kw=kw, pulses=6),
        converter("D2", "LV2", kw=kw, pulses=6),
    )
