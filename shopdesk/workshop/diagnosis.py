"""What the oil drained from a chamber suggests, in plain words, with the threshold used.

Shop rules of thumb (common practice), with thresholds from the shop's settings:
- more than spec out of a sealed cartridge: oil has migrated past the shaft seal into it;
- less than spec out of a lower leg: a wiper or the drain-bolt seal is leaking;
- the oil's condition: dark is worn, grey carries metal (bushing or stanchion wear), milky
  carries water (wipers), foamy carries air.
"""

from __future__ import annotations

from dataclasses import dataclass

from django.conf import settings

from shopdesk.shop.quantities import VOLUME, format_quantity
from shopdesk.specs.models import Chamber

CONDITION_FINDINGS = {
    "dark": "Dark oil: it has worn out; the interval may be too long for this rider.",
    "grey_metal": "Grey oil with metal: check bushings, stanchions and the damper shaft for wear.",
    "milky_water": "Milky oil: water got in; check the wipers and seals.",
    "foamy": "Foamy oil: air in it; bleed the damper carefully.",
}


@dataclass(frozen=True)
class Finding:
    level: str  # "ok", "note" or "warn"
    message: str


def drained_findings(*, chamber: Chamber, drained_ml: float | None, condition: str = "") -> list[Finding]:
    findings: list[Finding] = []
    spec = chamber.volume_ml
    if drained_ml is not None and spec:
        over = settings.SHOP_DRAIN_OVER_SPEC_PERCENT
        under = settings.SHOP_DRAIN_UNDER_SPEC_PERCENT
        difference = (drained_ml - spec) / spec * 100
        # In the shop's volume unit and its decimals: "8.5 mL out against 10 mL (-15 %)", not "8 mL".
        described = (
            f"{format_quantity(drained_ml, VOLUME)} out against {format_quantity(spec, VOLUME)} "
            f"in the spec ({difference:+.0f} %)"
        )
        if chamber.sealed and difference > over:
            findings.append(
                Finding(
                    "warn",
                    f"{described}: more than {over:g} % over. Oil has likely migrated past the shaft seal "
                    "into the sealed cartridge; replace the shaft seal.",
                )
            )
        elif chamber.kind == Chamber.Kind.LOWERS and difference < -under:
            findings.append(
                Finding(
                    "warn",
                    f"{described}: more than {under:g} % under. A wiper or the drain-bolt seal is likely "
                    "leaking; check the wipers, foam rings and crush washers.",
                )
            )
        elif chamber.sealed and difference < -under:
            findings.append(
                Finding(
                    "warn",
                    f"{described}: more than {under:g} % under. The cartridge has lost oil: check its seals "
                    "and the compensation volume; it may cavitate.",
                )
            )
        else:
            findings.append(
                Finding("ok", f"{described}: within the shop's thresholds (+{over:g} % / −{under:g} %).")
            )
    if condition in CONDITION_FINDINGS:
        findings.append(Finding("warn" if condition != "dark" else "note", CONDITION_FINDINGS[condition]))
    return findings


def fill_outside_tolerance(*, chamber: Chamber, filled_ml: float | None) -> float | None:
    """The fill's departure from the spec in percent when it passes the shop's tolerance, else None."""
    if filled_ml is None or not chamber.volume_ml:
        return None
    difference = (filled_ml - chamber.volume_ml) / chamber.volume_ml * 100
    return difference if abs(difference) > settings.SHOP_FILL_TOLERANCE_PERCENT else None
