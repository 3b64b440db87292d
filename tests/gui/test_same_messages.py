"""One validation function per setting: the same bad value gets the same message from every
command that takes the setting and from the window (docs/METHODS.md, "Honest numbers": one rule
per setting). Messages name the setting, never one command's option."""

from __future__ import annotations

import pytest

from volbench.cli import main
from volbench.errors import VolbenchError
from volbench.gui.state import Choices, WorkbenchState

# setting -> (bad value, the window's field (None: no control), argv prefixes of the commands that take it)
K = "{kestrel}"
X = ["--to", "{tmp}/x.json"]
SETTINGS = {
    "pricing vol 7": ("7", "pricing_vol", [
        ["compare", K, "--days", "30", "--pricing-vol"], ["export", K, *X, "--days", "30", "--pricing-vol"],
        ["price", "--spot", "1", "--strike", "1", "--rate", "0", "--years", "1", "--vol"],
        ["survey", K, "--pricing-vol"]]),
    "pricing vol 12": ("12", "pricing_vol", [
        ["compare", K, "--days", "30", "--pricing-vol"], ["export", K, *X, "--days", "30", "--pricing-vol"],
        ["survey", K, "--pricing-vol"]]),
    "days": ("2.5", "days", [
        ["compare", K, "--pricing-vol", "0.25", "--days"], ["export", K, *X, "--pricing-vol", "0.25", "--days"],
        ["survey", K, "--days"], ["hindsight", K, "--days"]]),
    "window": ("ten", "window", [
        ["estimate", K, "--window"], ["export", K, *X, "--window"],
        ["compare", K, "--pricing-vol", "0.25", "--days", "30", "--window"], ["survey", K, "--window"]]),
    "annualization": ("-5", "annualization", [
        *[[c, K, "--annualization"] for c in ("estimate", "scaling", "garch", "cone", "realized", "survey")],
        ["compare", K, "--pricing-vol", "0.25", "--days", "30", "--annualization"],
        ["export", K, *X, "--annualization"], ["hindsight", K, "--days", "21", "--annualization"]]),
    "as-of": ("2022/01/03", "as_of", [["estimate", K, "--as-of"], ["export", K, *X, "--as-of"]]),
    "estimator": ("gk", "cone_estimator", [
        ["cone", K, "--estimator"], ["compare", K, "--pricing-vol", "0.25", "--days", "30", "--cone-estimator"],
        ["export", K, *X, "--cone-estimator"]]),
    "rate": ("3", "rate", [
        ["compare", K, "--pricing-vol", "0.25", "--days", "30", "--rate"],
        ["export", K, *X, "--pricing-vol", "0.25", "--days", "30", "--rate"]]),
    "strike": ("-2", "strike", [
        ["compare", K, "--pricing-vol", "0.25", "--days", "30", "--strike"],
        ["export", K, *X, "--pricing-vol", "0.25", "--days", "30", "--strike"]]),
    "model": ("figarch", "garch_model", [["garch", K, "--model"], ["survey", K, "--with-garch", "--garch-model"]]),
    "distribution": ("cauchy", "garch_dist", [["garch", K, "--dist"]]),
}


def _window_value(field: str, text: str):
    """What the window's control would hand the state (numbers as numbers)."""
    if field in ("pricing_vol", "days", "annualization", "rate", "strike"):
        return float(text)
    return text


@pytest.mark.parametrize("setting", list(SETTINGS))
def test_the_same_bad_value_gets_the_same_message_everywhere(setting, capsys, tmp_path, kestrel, qtbot):
    value, field, commands = SETTINGS[setting]
    messages = set()
    for argv in commands:
        args = [a.replace("{kestrel}", str(kestrel)).replace("{tmp}", str(tmp_path)) for a in argv]
        code = main([*args, value])
        out, err = capsys.readouterr()
        assert code == 2 and out == "" and err.count("\n") == 1, (argv, err)
        assert err.startswith("volbench: "), err
        messages.add(err[len("volbench: "):].strip())
    assert len(messages) == 1, messages
    message = messages.pop()
    assert "--" not in message  # the setting, not one command's option
    assert not (tmp_path / "x.json").exists()
    state = WorkbenchState(Choices())  # the window's state model: every control writes through set()
    changed = []
    state.changed.connect(changed.append)
    with pytest.raises(VolbenchError) as refused:
        state.set(field, _window_value(field, value))
    assert str(refused.value) == message
    assert state.choices == Choices() and changed == []  # nothing changed, nothing announced
