"""A demo lot in the invented Kestrel Fluid Power scenario: 20 ground shafts, 5 sampled.

Kestrel Fluid Power receives lot ARD-2611-014 of 20 drive shafts KFP-2041 from Ardent
Precision Grinding. The inspection plan samples by ISO 2859-1 general inspection level II
(lot of 20: code letter C, 5 parts) with acceptance number 1; three profiles are measured on
each sampled shaft's seal seat. Two of the five sampled shafts were ground rougher (a worn
wheel, say) and fail Ra 0.4, so the lot is rejected. Everything here is fictional and the
profiles are synthetic.

The profile generator is passed in (``ground_profile``, normally
:func:`speccheck.demo.data.ground_profile`): this module sits below the demo layer and does not
import it.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

from speccheck._atomic import atomic_write_text

__all__ = [
    "build_demo_lot",
    "write_revised_spec",
    "DEMO_LOT_SERIALS",
    "DEMO_LOT_ROUGH",
    "DEMO_LOT_SEED",
]

DEMO_LOT_SEED = 2611014
# Serials of the sampled shafts (picked at random from 1..20 by the inspector, say)
DEMO_LOT_SERIALS = ("S-0103", "S-0106", "S-0111", "S-0114", "S-0119")
# Shafts ground rougher: generated Ra (µm) well above the 0.4 µm limit
DEMO_LOT_ROUGH = {"S-0106": 0.55, "S-0114": 0.52}
_NORMAL_RA_UM = (0.22, 0.25, 0.27)  # one per profile of a good shaft (as the demo data set)
_TRACE_MM, _DX_UM = 5.6, 0.5  # 7 cut-offs of 0.8 mm at ISO 3274's 0.5 µm spacing

SPEC_YAML = """\
# Kestrel Fluid Power - shaft KFP-2041, ground seal seat (demo lot spec; invented scenario).
# ISO 1302 indication: the 16 % rule applies to "Ra 0.4", the max rule to "Rz max 3.2".
spec_version: 1
part:
  number: KFP-2041
  revision: D
  surface: seal seat
  name: drive shaft
  supplier: Ardent Precision Grinding
requirements:
  - "Ra 0.4"
  - "Rz max 3.2"
measurement:
  cutoff: 0.8mm
notes: Measure axially across the grinding lay at three positions 120 degrees apart.
"""

# The drawing author's question: had revision E (Ra 0.4 relaxed to Ra 0.8, Rz max 3.2 to
# Rz max 6.3) been in force, what would it have done to past deliveries? ``speccheck replay``
# answers it from the records store and the archived profiles.
REVISED_SPEC_YAML = """\
# Kestrel Fluid Power - shaft KFP-2041, ground seal seat, proposed revision E (demo; invented).
spec_version: 1
part:
  number: KFP-2041
  revision: E
  surface: seal seat
  name: drive shaft
requirements:
  - "Ra 0.8"
  - "Rz max 6.3"
measurement:
  cutoff: 0.8mm
"""

PLAN_YAML = """\
# Incoming inspection of lot ARD-2611-014 (demo; invented scenario, synthetic data).
plan_version: 1
lot:
  id: ARD-2611-014
  supplier: Ardent Precision Grinding
  part: KFP-2041
  part_name: drive shaft
  size: 20
  received: 2026-11-28
  order: KFP-PO-77120
surfaces:
  seal-seat:
    spec: kfp-2041-seal-seat-lot.yaml
    measurements: 3
sampling:
  inspection_level: II
  acceptance_number: 1
data:
  pattern: "{part_serial}/{surface}/*.csv"
notes: Parts drawn at random from the delivery; profiles traced across the lay.
"""


def build_demo_lot(folder: str | Path, *, ground_profile: Callable[..., Any]) -> Path:
    """Write the demo lot (plan, spec, profiles) into ``folder``; return the plan's path.

    Parameters
    ----------
    folder:
        Created if missing. Receives ``lot-plan.yaml``, ``kfp-2041-seal-seat-lot.yaml`` and
        ``data/<serial>/seal-seat/p1.csv`` … ``p3.csv`` for each sampled shaft.
    ground_profile:
        ``speccheck.demo.data.ground_profile`` (keyword arguments ``length_mm``, ``dx_um``,
        ``ra_um``, ``correlation_um``, ``rng``; returns heights in µm).

    Returns
    -------
    Path
        The inspection plan; run ``speccheck lot PLAN --data FOLDER/data``.
    """
    import numpy as np

    from speccheck.profile import Profile, SourceInfo
    from speccheck.readers import write_csv

    root = Path(folder)
    root.mkdir(parents=True, exist_ok=True)
    atomic_write_text(root / "kfp-2041-seal-seat-lot.yaml", SPEC_YAML)
    plan_path = root / "lot-plan.yaml"
    for k, serial in enumerate(DEMO_LOT_SERIALS):
        target = root / "data" / serial / "seal-seat"
        target.mkdir(parents=True, exist_ok=True)
        for j, ra_um in enumerate(_NORMAL_RA_UM):
            rng = np.random.default_rng([DEMO_LOT_SEED, k, j])
            ra = DEMO_LOT_ROUGH.get(serial, ra_um) + (0.01 * j if serial in DEMO_LOT_ROUGH else 0.0)
            z_um = ground_profile(
                length_mm=_TRACE_MM, dx_um=_DX_UM, ra_um=ra, correlation_um=9.0, rng=rng
            )
            source = SourceInfo(
                format="demo",
                instrument="speccheck demo generator (synthetic)",
                date="2026-11-29",
                comment=f"KFP-2041 {serial} seal seat, lot ARD-2611-014; invented demo data",
            )
            write_csv(target / f"p{j + 1}.csv", Profile(z_um=z_um, dx_um=_DX_UM, source=source))
    atomic_write_text(plan_path, PLAN_YAML)
    return plan_path


def write_revised_spec(folder: str | Path) -> Path:
    """Write the proposed revision E of the demo lot's spec into ``folder``; return its path."""
    path = Path(folder) / "kfp-2041-seal-seat-rev-e.yaml"
    atomic_write_text(path, REVISED_SPEC_YAML)
    return path
