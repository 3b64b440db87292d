"""Every setting of every settings group has a flag on ``volbench export`` and a row in the
export's ``inputs`` sheet.

The groups and their fields are read from :class:`volbench.settings.Settings` (``group_types``)
and the dataclass fields of each group, so a group or field added later is checked without a
change here: for each field the test finds a value other than the default that the group
accepts, writes the equivalent export command (``export_argv``), parses it with the real parser
and expects the same settings back.
"""

from __future__ import annotations

import dataclasses
import typing
from pathlib import Path

import pytest

from volbench.cli import build_parser
from volbench.cli.options import GROUPS, OptionGroup, export_argv, settings_from_args
from volbench.export import build_bundle
from volbench.settings import (
    EventsSettings,
    LifeSettings,
    OptionSettings,
    QuotesSettings,
    Settings,
    group_types,
)

# Values tried in turn for a field (the first the group accepts and that differs from the
# default is used); a new field whose type none of these fits fails below with its name.
SAMPLES = (7, 3, 150, 0.9, 0.1, 0.3, 0.02, 300.0, 2.5, (5, 10, 21), (2, 4), "t", "zero", "put", "parkinson", "gjr",
           "2020-06-30", "%d/%m/%Y", ";", ",", "calendar", "4h", "some text")

QUOTES = Path(__file__).resolve().parents[2] / "sample_prices" / "quotes" / "ironvale_mining_quotes.csv"

EVENTS = QUOTES.parents[1] / "events" / "ironvale_mining_events.csv"

BASE = {"option": {"pricing_vol": 0.25}, "life": {"days": 30}, "quotes": {"file": QUOTES}, "events": {"file": EVENTS}}
"""Required fields of groups that have no default object."""

FILE_FIELDS = {"life.holidays", "quotes.file", "quotes.date_format", "life.expiry", "events.file",
               "events.date_format", "events.calendar"}
"""Settings that name a file read when the settings are built, the expiry (which excludes the
base's days) and a date format the sample file must match: round-tripped in
``test_settings_naming_files_survive_by_path``."""

NEEDS_OPTION = {"life", "quotes"}
"""Groups that only mean something with a comparison (the command line refuses them alone)."""


def _field_paths(cls, prefix: str):
    """(path, setter) for every field of a group, nested dataclasses walked into."""
    obj = cls(**BASE.get(prefix.split(".")[0], {}))
    for f in dataclasses.fields(obj):
        value = getattr(obj, f.name)
        if dataclasses.is_dataclass(value) and f"{prefix}.{f.name}" not in FILE_FIELDS:
            for g in dataclasses.fields(value):
                yield f"{prefix}.{f.name}.{g.name}", (f.name, g.name)
        else:
            yield f"{prefix}.{f.name}", (f.name,)


def _variant(cls, group: str, names: tuple[str, ...]):
    """The group with one field set to a non-default sample value it accepts."""
    base = BASE.get(group, {})
    default = cls(**base)
    current = default
    for name in names[:-1]:
        current = getattr(current, name)
    old = getattr(current, names[-1])
    owner = type(current)
    hint = str(typing.get_type_hints(owner).get(names[-1], ""))
    texts = [v for v in SAMPLES if isinstance(v, str)]
    text_first = "str" in hint and "int" not in hint and "float" not in hint
    samples = [not old] if isinstance(old, bool) else (texts if text_first else SAMPLES)
    for sample in samples:
        try:
            if len(names) == 1:
                obj = cls(**{**base, names[0]: sample})
            else:
                inner = dataclasses.replace(getattr(default, names[0]), **{names[1]: sample})
                obj = cls(**{**base, names[0]: inner})
        except Exception:  # noqa: BLE001, S112 - not a value this field accepts; try the next
            continue
        if obj != default:
            return obj
    pytest.fail(f"no sample value fits setting {group}.{'.'.join(names)}: add one to SAMPLES")


def _cases():
    for group, cls in group_types().items():
        for path, names in _field_paths(cls, group):
            if path not in OptionGroup.NOT_ON_EXPORT and path not in FILE_FIELDS:
                yield pytest.param(group, cls, names, id=path)


def _round_trip(settings: Settings, tmp_path: Path) -> Settings:
    argv = export_argv(settings, [str(tmp_path / "prices.csv")])
    args = build_parser().parse_args(["export", *argv, "--to", str(tmp_path / "out.xlsx")])
    return settings_from_args(args)


def test_every_group_has_export_flags():
    # every settings group is on the command line with its flags for the equivalent command
    missing = [name for name in group_types() if name not in GROUPS or GROUPS[name].argv is None]
    assert not missing, f"settings groups without export flags: {missing}"


@pytest.mark.parametrize(("group", "cls", "names"), list(_cases()))
def test_every_setting_has_an_export_flag(group, cls, names, tmp_path):
    # common practice, no source: a setting survives export command -> parser -> settings unchanged
    changed = _variant(cls, group, names)
    context = {"option": None} if group == "decision" else {}
    if group in NEEDS_OPTION:
        context = {"option": OptionSettings(pricing_vol=0.25)}
        context.update({} if group == "life" else {"life": LifeSettings(days=30)})
    if group == "option" and changed.days is None:  # the option's life comes from the life group
        context = {"life": LifeSettings(days=30)}
    settings = Settings(**{group: changed, **context})
    back = _round_trip(settings, tmp_path)
    if (group, names) == ("option", ("days",)):  # bars of the option's life travel as the life group's --days
        assert back.life == LifeSettings(days=changed.days, basis="trading")
        assert back.option == dataclasses.replace(changed, days=None)
        return
    got = getattr(back, group)
    if group == "quotes":  # the file read is compared by path and digest in the test below
        assert got.file.sha256 == changed.file.sha256
        got = dataclasses.replace(got, file=changed.file)
    assert got == changed, f"{group}.{'.'.join(names)} did not survive the export flags"


def test_settings_naming_files_survive_by_path(tmp_path):
    # common practice, no source: a file setting is written as its absolute path and read again
    hol = tmp_path / "holidays.txt"
    hol.write_text("2024-12-25\n2025-01-01\n", encoding="utf-8")
    settings = Settings(option=OptionSettings(pricing_vol=0.25),
                        life=LifeSettings(expiry="2025-03-21", basis="calendar", holidays=hol),
                        quotes=QuotesSettings(file=QUOTES, date_format="%Y-%m-%d", model="gjr"),
                        events=EventsSettings(file=EVENTS))
    back = _round_trip(settings, tmp_path)
    assert Path(back.events.file).resolve() == EVENTS.resolve()
    assert back.events.calendar.sha256 == settings.events.calendar.sha256
    assert (back.life.expiry, back.life.basis) == ("2025-03-21", "calendar")
    assert [str(d) for d in back.life.holidays.dates] == ["2024-12-25", "2025-01-01"]
    assert Path(back.life.holidays.source).resolve() == hol.resolve()
    assert Path(back.quotes.file.source).resolve() == QUOTES.resolve()
    assert (back.quotes.date_format, back.quotes.model) == ("%Y-%m-%d", "gjr")
    assert back.quotes.file.sha256 == settings.quotes.file.sha256


def test_a_group_switched_off_stays_off(tmp_path):
    settings = Settings(cone=None, scaling=None, garch=None, option=None, decision=None)
    back = _round_trip(settings, tmp_path)
    assert (back.cone, back.scaling, back.garch, back.option, back.decision) == (None,) * 5


def test_every_setting_has_an_inputs_row(sample_dir):
    from volbench.data import load_many
    from volbench.settings import DecisionSettings, GarchSettings, OptionSettings

    settings = Settings(garch=GarchSettings(models=("garch",)), option=OptionSettings(pricing_vol=0.25),
                        life=LifeSettings(days=21), quotes=QuotesSettings(file=QUOTES), events=EventsSettings(file=EVENTS),
                        decision=DecisionSettings(vol=0.26, rationale="r", prepared_by="p"))
    histories = load_many([sample_dir / "ironvale_mining.csv"], settings.import_options)
    inputs = build_bundle(histories, settings).table("inputs")
    items = set(inputs.loc[inputs["group"] == "effective setting", "item"])
    wanted = {path for group, cls in group_types().items() for path, _ in _field_paths(cls, group)}
    assert wanted <= items, sorted(wanted - items)


def test_free_text_that_looks_like_an_option_survives(tmp_path):
    from volbench.settings import DecisionSettings

    settings = Settings(decision=DecisionSettings(vol=0.2, rationale="-2 points: --the desk's view", prepared_by="-B"))
    assert _round_trip(settings, tmp_path).decision == settings.decision
