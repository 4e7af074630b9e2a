"""Money of a programme: finance (discounting, escalation, payback, levelised and abatement
cost), uncertainty (distributions, sampling, sensitivity) and the programme's cash flows.

Everything is re-exported here, so ``from workbench.models import economics as econ;
econ.npv(...)`` works whichever module a function lives in.
"""

from workbench.models.economics.cashflow import (
    ClassLine,
    Comparison,
    Money,
    NPVDraws,
    OptionLines,
    Response,
    compare,
    cost_per_m,
    inspection_years,
    levelised_cost_per_m,
    net_cost,
    npv_draws,
    physics_draws,
    programme_money,
)
from workbench.models.economics.finance import (
    abatement_cost,
    annuity_factor,
    break_even,
    capital_recovery_factor,
    discount_factors,
    discounted_payback,
    escalate,
    levelised_cost,
    npv,
    residual_value,
    simple_payback,
)
from workbench.models.economics.uncertainty import (
    DISTRIBUTION_PARAMETERS,
    Correlation,
    Distribution,
    probability_payback_within,
    probability_positive,
    sample,
    sample_inputs,
    summarise,
    tornado,
)

__all__ = [
    "DISTRIBUTION_PARAMETERS",
    "ClassLine",
    "Comparison",
    "Correlation",
    "Distribution",
    "Money",
    "NPVDraws",
    "OptionLines",
    "Response",
    "abatement_cost",
    "annuity_factor",
    "break_even",
    "capital_recovery_factor",
    "compare",
    "cost_per_m",
    "discount_factors",
    "discounted_payback",
    "escalate",
    "inspection_years",
    "levelised_cost",
    "levelised_cost_per_m",
    "net_cost",
    "npv",
    "npv_draws",
    "physics_draws",
    "probability_payback_within",
    "probability_positive",
    "programme_money",
    "residual_value",
    "sample",
    "sample_inputs",
    "simple_payback",
    "summarise",
    "tornado",
]
