"""Say in plain words what an inspection plan asks for: how many parts, when to accept, what.

The sampling figures come from :mod:`speccheck.lot.sampling` (ISO 2859-1 code letter and sample
size, the operating characteristic); the requirements of each surface from its spec file.
"""

from __future__ import annotations

from speccheck.lot.plan import LoadedPlan
from speccheck.lot.sampling import SamplingPlan, acceptance_probability, fraction_at_probability

__all__ = ["explain_plan", "oc_key_points", "OC_PROBABILITIES", "OC_FRACTIONS"]

# Probabilities of acceptance whose fraction nonconforming is stated: the quality nearly always
# accepted (95 %), the indifference point (50 %) and the quality nearly always rejected (10 %)
# (common practice, no source).
OC_PROBABILITIES = (0.95, 0.50, 0.10)
# Fractions nonconforming at which P(accept) is stated.
OC_FRACTIONS = (0.01, 0.05, 0.10, 0.20)


def oc_key_points(
    plan: SamplingPlan,
) -> tuple[list[tuple[float, float | None]], list[tuple[float, float]]]:
    """The OC curve's key points: (Pa, p at that Pa) and (p, Pa at that p), all fractions 0–1."""
    at_pa = [(pa, fraction_at_probability(plan, pa)) for pa in OC_PROBABILITIES]
    at_p = [
        (
            p,
            float(
                acceptance_probability(
                    p,
                    sample_size=plan.sample_size,
                    acceptance_number=plan.acceptance_number,
                    lot_size=plan.lot_size,
                )
            ),
        )
        for p in OC_FRACTIONS
    ]
    return at_pa, at_p


def _sampling_lines(smp: SamplingPlan) -> list[str]:
    if smp.code_letter is not None:
        lines = [
            "Inspection level: general inspection level II (ISO 2859-1, single sampling, "
            "normal inspection)",
            f"Sample size code letter: {smp.code_letter} (ISO 2859-1 Table 1, lot size "
            f"{smp.lot_size})",
        ]
    else:
        lines = ["Inspection level: none (sample size stated in the plan)"]
    n_words = f"Sample size: n = {smp.sample_size} part(s)"
    if smp.every_part:
        n_words += " (every part of the lot)"
    elif smp.code_letter is not None:
        n_words += " (ISO 2859-1 Table 2-A)"
    lines.append(n_words)
    c = smp.acceptance_number
    lines.append(
        f"Acceptance number: c = {c}: accept the lot with at most {c} nonconforming part(s) in "
        f"the sample, reject it with {c + 1} or more"
    )
    return lines


def _oc_lines(smp: SamplingPlan) -> list[str]:
    model = (
        f"hypergeometric: n/N = {smp.sample_size}/{smp.lot_size} > 0.1, parts drawn without "
        "replacement"
        if smp.model == "hypergeometric"
        else "binomial"
    )
    lines = [f"Operating characteristic ({model}):"]
    at_pa, at_p = oc_key_points(smp)
    hyper = smp.model == "hypergeometric"
    for pa, p in at_pa:
        if p is None:
            lines.append(f"  accepted with probability {100 * pa:.0f} %: never (cannot reject)")
        elif hyper:  # a step function of the count D of nonconforming parts in the lot
            d = round(p * smp.lot_size)
            lines.append(
                f"  accepted with probability {100 * pa:.0f} % or less from {d} of "
                f"{smp.lot_size} parts nonconforming ({100 * p:.3g} %)"
            )
        else:
            lines.append(
                f"  accepted with probability {100 * pa:.0f} % at {100 * p:.3g} % nonconforming"
            )
    seen = set()
    for p, pa in at_p:
        if hyper:
            d = round(p * smp.lot_size)
            if d == 0 or d in seen:
                continue
            seen.add(d)
            what = f"a lot with {d} of {smp.lot_size} parts nonconforming"
        else:
            what = f"a lot {100 * p:g} % nonconforming"
        lines.append(f"  {what} is accepted with probability {100 * pa:.1f} %")
    return lines


def explain_plan(plan: LoadedPlan) -> str:
    """The whole plan in plain words: lot, sampling, OC key points, surfaces and their specs."""
    from speccheck.spec.loader import load_spec

    lot = plan.lot
    head = f"Lot {lot['id']}: part {lot['part']}"
    if lot.get("part_name"):
        head += f" ({lot['part_name']})"
    lines = [head, f"Supplier: {lot['supplier']}, received {lot['received']}"]
    if lot.get("order"):
        lines.append(f"Order: {lot['order']}")
    lines.append(f"Lot size: N = {plan.sampling.lot_size} part(s)")
    lines += _sampling_lines(plan.sampling)
    lines += _oc_lines(plan.sampling)
    lines.append("")
    lines.append(f"Surfaces ({len(plan.surfaces)}), measured on each sampled part:")
    for s in plan.surfaces:
        spec = load_spec(s.spec_path)
        lines.append(
            f"  {s.name}: spec {s.spec_text}, at least {s.measurements} profile(s) per part"
        )
        for req in spec.requirements:
            lines.append(f"    - {req.text}")
    lines.append(f"Profile files below --data: {plan.pattern}")
    if plan.notes:
        lines.append(f"Notes: {plan.notes}")
    lines.append("")
    lines.append(
        "A sampled part counts as nonconforming when a surface of it fails its spec. The drawing, "
        "the contract and the customer's quality requirements take precedence; sampling by "
        "ISO 2859-1 as agreed with the customer."
    )
    return "\n".join(lines)
