"""Aftertreatment and economics panel: prices, programme money, catalysts, uncertainty.

Prices are text with their unit (``"0.82 per L"``, ``"1.38 per kg"``); the discount rate is a
percentage (``"7 %"``); the carbon price is per tonne (``"55 per t"``). Every input that may
carry a distribution shows its kind and one field per parameter, so the Monte Carlo ranges are
edited where the value is. Each option's catalyst shows its device, life and replacement
policy (ages as ``"250000 km"``, ``"36 month"`` or ``"never"``); a key the study leaves out
shows the device preset's value.
"""

from __future__ import annotations

import math
from typing import Any

import ipywidgets as widgets

from workbench.interfaces.panels.fields import (
    BoundField,
    UncertainField,
    esc,
    get_or,
    text_box,
    to_raw,
)
from workbench.interfaces.panels.state import OptionSlot, StudyState, option_slots
from workbench.models.aftertreatment import DEVICE_PRESETS

#: Replacement policies of a catalyst.
POLICIES = ("threshold", "interval")


def age_text(age: float, basis: str) -> str:
    """An age as the study file writes it: ``"never"``, ``"36 month"`` or ``"250000 km"``."""
    if math.isinf(age):
        return "never"
    return f"{age:g} month" if basis == "months" else f"{age / 1e3:g} km"


class CatalystRow(widgets.VBox):
    """Device, life and replacement policy of one option's catalyst (one class or all).

    Parameters
    ----------
    state : StudyState
        The shared state.
    slot : OptionSlot
        Where the option sets its aftertreatment.
    """

    def __init__(self, state: StudyState, slot: OptionSlot) -> None:
        device = slot.option.per_class[slot.class_id].aftertreatment
        raw = get_or(state.study, slot.path, {})
        p = slot.path

        def shown(key: str, default: str) -> str:
            return str(raw[key]) if isinstance(raw, dict) and key in raw else default

        def text(key: str, title: str, default: str) -> BoundField:
            return BoundField(state, f"{p}.{key}", title, text_box(shown(key, default)),
                              convert=to_raw)

        def choice(key: str, title: str, options: tuple[str, ...], default: str) -> BoundField:
            return BoundField(state, f"{p}.{key}", title, widgets.Dropdown(
                options=options, value=shown(key, default),
                layout=widgets.Layout(width="200px")))

        self.fields = {
            "preset": choice("preset", "device", tuple(sorted(DEVICE_PRESETS)), "none"),
            "life": UncertainField(state, f"{p}.life", "catalyst life",
                                   age_text(device.life, device.age_basis)),
            "policy": choice("policy", "replacement policy", POLICIES, device.policy),
            "replacement_threshold": text("replacement_threshold", "replace below efficiency",
                                          f"{device.replacement_threshold:g}"),
            "replacement_interval": text("replacement_interval", "replace every",
                                         age_text(device.replacement_interval,
                                                  device.age_basis)),
        }
        super().__init__([widgets.HTML(f"<b>{esc(slot.title)}</b>"), *self.fields.values()],
                         layout=widgets.Layout(border="1px solid #ddd", padding="6px",
                                               margin="4px 0"))


class EconomicsPanel(widgets.VBox):
    """Prices, discount rate, horizon, carbon price, catalysts; uncertainty where allowed.

    Parameters
    ----------
    state : StudyState
        The shared state.

    Attributes
    ----------
    prices : dict of str to UncertainField
        Price field of each fuel, by fuel id (rebuilt when the fuels of the study change).
    programme : dict of str to widget
        ``discount_rate``, ``horizon_years``, ``carbon_price``.
    catalysts : dict of str to CatalystRow
        By key path of the option's aftertreatment.
    """

    def __init__(self, state: StudyState) -> None:
        self.state = state
        self.prices: dict[str, UncertainField] = {}
        self.price_box = widgets.VBox()
        self._build_prices()
        self.programme: dict[str, Any] = {
            "discount_rate": UncertainField(state, "programme.discount_rate",
                                            "discount rate (real)"),
            "horizon_years": BoundField(state, "programme.horizon_years", "horizon [years]",
                                        widgets.BoundedIntText(
                                            value=state.study.get("programme.horizon_years"),
                                            min=1, max=60,
                                            layout=widgets.Layout(width="90px"))),
            "carbon_price": UncertainField(state, "programme.carbon_price",
                                           "carbon price (per t CO2e)"),
        }
        self.catalysts = {s.path: CatalystRow(state, s)
                          for s in option_slots(state.study, "aftertreatment")}
        state.on_change(lambda _s: self._build_prices())
        catalysts = widgets.Accordion(
            children=[widgets.VBox(list(self.catalysts.values()))],
            titles=("Aftertreatment: catalyst life and replacement policy of each option",))
        super().__init__([
            widgets.HTML("<h3>Economics</h3><p>Prices with their unit: <code>0.82 per L</code>, "
                         "<code>1.38 per kg</code>, <code>12 per GJ</code>; rates as "
                         "<code>7 %</code>. Pick a kind other than <i>fixed</i> to give an "
                         "uncertainty range for the Monte Carlo.</p><h4>Fuel prices</h4>"),
            self.price_box,
            widgets.HTML("<h4>Programme</h4>"),
            *self.programme.values(),
            catalysts,
        ])

    def _build_prices(self) -> None:
        fuels = list(self.state.study.get("prices"))
        if fuels == list(self.prices):
            return
        self.prices = {fid: self.prices.get(fid) or UncertainField(
            self.state, f"prices.{fid}", f"price of {fid}") for fid in fuels}
        self.price_box.children = tuple(self.prices.values())
