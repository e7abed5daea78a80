"""CIEDE2000 colour difference (Sharma, Wu and Dalal 2005, equations 1-22)."""

from __future__ import annotations

import math


def ciede2000(lab1: tuple[float, float, float], lab2: tuple[float, float, float]) -> float:
    """ΔE00 between two CIELAB colours, with kL = kC = kH = 1."""
    L1, a1, b1 = lab1
    L2, a2, b2 = lab2
    C1, C2 = math.hypot(a1, b1), math.hypot(a2, b2)
    C_mean = (C1 + C2) / 2
    G = 0.5 * (1 - math.sqrt(C_mean**7 / (C_mean**7 + 25**7)))
    a1p, a2p = (1 + G) * a1, (1 + G) * a2
    C1p, C2p = math.hypot(a1p, b1), math.hypot(a2p, b2)
    h1p = math.degrees(math.atan2(b1, a1p)) % 360 if (a1p or b1) else 0.0
    h2p = math.degrees(math.atan2(b2, a2p)) % 360 if (a2p or b2) else 0.0
    dLp = L2 - L1
    dCp = C2p - C1p
    if C1p * C2p == 0:
        dhp = 0.0
    elif abs(h2p - h1p) <= 180:
        dhp = h2p - h1p
    elif h2p - h1p > 180:
        dhp = h2p - h1p - 360
    else:
        dhp = h2p - h1p + 360
    dHp = 2 * math.sqrt(C1p * C2p) * math.sin(math.radians(dhp) / 2)
    Lp_mean = (L1 + L2) / 2
    Cp_mean = (C1p + C2p) / 2
    if C1p * C2p == 0:
        hp_mean = h1p + h2p
    elif abs(h1p - h2p) <= 180:
        hp_mean = (h1p + h2p) / 2
    elif h1p + h2p < 360:
        hp_mean = (h1p + h2p + 360) / 2
    else:
        hp_mean = (h1p + h2p - 360) / 2
    T = (
        1
        - 0.17 * math.cos(math.radians(hp_mean - 30))
        + 0.24 * math.cos(math.radians(2 * hp_mean))
        + 0.32 * math.cos(math.radians(3 * hp_mean + 6))
        - 0.20 * math.cos(math.radians(4 * hp_mean - 63))
    )
    d_theta = 30 * math.exp(-(((hp_mean - 275) / 25) ** 2))
    R_C = 2 * math.sqrt(Cp_mean**7 / (Cp_mean**7 + 25**7))
    S_L = 1 + 0.015 * (Lp_mean - 50) ** 2 / math.sqrt(20 + (Lp_mean - 50) ** 2)
    S_C = 1 + 0.045 * Cp_mean
    S_H = 1 + 0.015 * Cp_mean * T
    R_T = -math.sin(math.radians(2 * d_theta)) * R_C
    return math.sqrt(
        (dLp / S_L) ** 2 + (dCp / S_C) ** 2 + (dHp / S_H) ** 2 + R_T * (dCp / S_C) * (dHp / S_H)
    )
