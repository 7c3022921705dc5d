"""Invented demonstration data: river-monitoring readings from the Hollin Water network.

Everything here is made up, generated from a fixed seed, for the examples and tests only.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

STATIONS = ("Ashby Weir", "Brindle Ford", "Carrow Bridge", "Dunmere Mill", "Elstow Sluice")


def load(rows: int = 2000, month: int = 1, seed: int = 20261202) -> pd.DataFrame:
    """Readings from five invented river-monitoring stations for one month.

    Columns: ``station``, ``taken`` (timestamp), ``turbidity_ntu`` (right-skewed),
    ``nitrate_mg_l`` (log-normal-ish), ``dissolved_oxygen_mg_l``, ``conductivity_us_cm``,
    ``water_temp_c``, ``probe`` (the probe's serial, text). Known faults are injected so that
    the examples have something to find: a turbidity probe stuck on one value, short spikes, a
    day of conductivity logged in mS/cm instead of µS/cm (a unit slip), and missing readings.
    The index, ``reading``, is unique across months (``"01-00042"``).

    Parameters
    ----------
    rows : number of readings (at least 50).
    month : 1, 2, ...: each month is a new batch with the same behaviour and new noise.
    seed : base seed; the month is mixed into it.
    """
    if rows < 50:
        raise ValueError(f"the demo needs at least 50 rows, got {rows}")
    rng = np.random.default_rng([seed, month])
    station = rng.choice(len(STATIONS), size=rows, p=[0.24, 0.22, 0.2, 0.18, 0.16])
    start = pd.Timestamp(2026, month, 1) if 1 <= month <= 12 else pd.Timestamp(2026, 1, 1)
    taken = start + pd.to_timedelta(np.sort(rng.uniform(0, 28 * 24, size=rows)), unit="h")
    hour = (taken.hour.to_numpy() + taken.minute.to_numpy() / 60)
    site_turb = np.array([4.0, 6.5, 3.2, 9.0, 5.1])[station]
    turbidity = rng.gamma(shape=1.6, scale=site_turb / 1.6)
    nitrate = np.exp(rng.normal(np.log([2.1, 3.4, 1.6, 4.2, 2.8])[station], 0.35))
    temp = 11 + 3 * np.sin(2 * np.pi * (hour - 9) / 24) + rng.normal(0, 0.8, rows)
    oxygen = 14.6 - 0.39 * temp + rng.normal(0, 0.45, rows)
    conductivity = rng.normal(np.array([410, 520, 380, 640, 455])[station], 38)
    # faults
    n_spike = max(3, rows // 250)
    spikes = rng.choice(rows, size=n_spike, replace=False)
    turbidity[spikes] *= rng.uniform(6, 15, size=n_spike)
    stuck = np.flatnonzero(station == 3)[: max(5, rows // 120)]
    turbidity[stuck] = 2.47
    slip_day = (taken.day.to_numpy() == 17) & (station == 1)
    conductivity[slip_day] = conductivity[slip_day] / 1000.0
    dip = rng.choice(rows, size=max(2, rows // 500), replace=False)
    oxygen[dip] -= rng.uniform(4, 6, size=dip.size)
    for values in (turbidity, nitrate, oxygen, conductivity):
        gone = rng.choice(rows, size=max(1, rows // 100), replace=False)
        values[gone] = np.nan
    probes = np.array([f"HW-{s}{k:02d}" for s in "ABCDE" for k in range(1, 3)])
    probe = probes[station * 2 + rng.integers(0, 2, rows)]
    probe[stuck] = "HW-D01"  # the stuck readings all come from one probe
    df = pd.DataFrame({
        "station": pd.Categorical(np.array(STATIONS)[station], categories=STATIONS),
        "taken": taken,
        "turbidity_ntu": np.round(turbidity, 2),
        "nitrate_mg_l": np.round(nitrate, 3),
        "dissolved_oxygen_mg_l": np.round(oxygen, 2),
        "conductivity_us_cm": np.round(conductivity, 1),
        "water_temp_c": np.round(temp, 2),
        "probe": probe,
    }, index=pd.Index([f"{month:02d}-{i:05d}" for i in range(rows)], name="reading"))
    return df
