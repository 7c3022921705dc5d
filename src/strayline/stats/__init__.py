"""Pure statistics over one-dimensional data: numpy and scipy only.

Every function accepts an array-like or a pandas Series, ignores NaN / NA, and refuses what it
cannot handle with a ValueError or TypeError that names the problem and the fix.
"""

from .location import MAD_TO_SD, Moments, moments
from .medcouple import medcouple
from .normality import AndersonDarling, Normality, TestResult, normality
from .qq import POSITIONS, QQ, NormalQuantiles, normal_quantiles, plotting_positions, qq
from .rules import (
    GESD,
    RULES,
    AdjustedFences,
    Fences,
    Flags,
    Grubbs,
    adjusted_fences,
    fences,
    flag,
    gesd,
    grubbs,
    robust_zscores,
    zscores,
)
from .transform import TRANSFORMS, Transformed, transform

__all__ = [
    "GESD", "MAD_TO_SD", "POSITIONS", "QQ", "RULES", "TRANSFORMS", "AdjustedFences",
    "AndersonDarling", "Fences", "Flags", "Grubbs", "Moments", "NormalQuantiles", "Normality",
    "TestResult", "Transformed", "adjusted_fences", "fences", "flag", "gesd", "grubbs",
    "medcouple", "moments", "normal_quantiles", "normality", "plotting_positions", "qq",
    "robust_zscores", "transform", "zscores",
]
