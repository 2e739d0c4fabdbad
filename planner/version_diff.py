"""What differs between versions of a plan, in the words of its edit form (generic over kinds).

A version (a ``Scenario``, a ``ScenarioVersion`` or a valid edit form) is shown
as the values its kind's edit form would show for it, each under the form's own
label; two versions differ where those texts differ. The edit conflict page and
the history pages use this, so every kind's fields are described without the
shared code knowing them.
"""

from __future__ import annotations

from dataclasses import dataclass

from django import forms

from planner.forms import SHARED_FIELDS, scenario_values

EMPTY = "—"


@dataclass(frozen=True)
class Difference:
    name: str  # the form field
    label: str
    before: str
    after: str
    yours: str | None = None  # on a conflict: the value in the form that was refused


def snapshot(version) -> dict:
    """The fields a person edits, from a Scenario or a ScenarioVersion."""
    return {name: getattr(version, name) for name in (*SHARED_FIELDS, "parameters")}


def _choice_labels(field) -> dict[str, str]:
    labels = {}
    for key, label in field.choices:
        if isinstance(label, list | tuple):  # an option group
            labels.update({str(k): str(v) for k, v in label})
        else:
            labels[str(key)] = str(label)
    return labels


def _text(field: forms.Field, value) -> str:
    if value is None or value == "" or value == [] or value == ():
        return EMPTY
    if isinstance(field, forms.ChoiceField):
        return _choice_labels(field).get(str(value), str(value))
    if isinstance(field, forms.BooleanField):
        return "yes" if value else "no"
    shown = field.widget.format_value(value)
    return EMPTY if shown in (None, "") else str(shown)


def form_texts(kind, version: dict) -> dict[str, tuple[str, str]]:
    """{field name: (label, value as the edit form shows it)} for a snapshot; {} if its parameters cannot be read."""
    try:
        params = kind.params_from_json(version["parameters"])
    except ValueError:
        return {}
    initial = {name: version[name] for name in SHARED_FIELDS} | kind.form_initial(params)
    form = kind.scenario_form(initial=initial)
    return {bf.name: (str(bf.label), _text(bf.field, bf.value())) for bf in form if not bf.is_hidden}


def submitted_texts(kind, form) -> dict[str, tuple[str, str]]:
    """The same for a submitted edit form: its cleaned values when valid (shown as saved ones are), else as typed."""
    if form.is_valid():
        values = scenario_values(form)
        return form_texts(
            kind, {name: values[name] for name in SHARED_FIELDS} | {"parameters": values["params"].to_json()}
        )
    return {bf.name: (str(bf.label), _text(bf.field, bf.value())) for bf in form if not bf.is_hidden}


def compare(old: dict[str, tuple[str, str]], new: dict[str, tuple[str, str]]) -> list[Difference]:
    """Fields whose shown values differ between two ``form_texts`` results (form order, ``new``'s labels)."""
    return [
        Difference(name=name, label=label, before=old.get(name, (label, EMPTY))[1], after=text)
        for name, (label, text) in new.items()
        if old.get(name, (label, EMPTY))[1] != text
    ]


def differences(kind, before: dict, after: dict) -> list[Difference]:
    """The fields whose shown values differ from snapshot ``before`` to snapshot ``after``."""
    return compare(form_texts(kind, before), form_texts(kind, after))


def changes_by_version(kind, versions: list) -> list[tuple[object, list[Difference] | None]]:
    """(version, what it changed from the version before it) for ScenarioVersions newest first; None for the
    oldest shown (nothing before it to compare). Builds each version's form once."""
    texts = [form_texts(kind, snapshot(version)) for version in versions]
    return [
        (version, compare(texts[i + 1], texts[i]) if i + 1 < len(versions) else None)
        for i, version in enumerate(versions)
    ]


def conflict(kind, *, base: dict | None, current: dict, form) -> list[Difference]:
    """What a refused edit needs to see: the fields saved since it began (base -> current), with its own value.

    Without the base version (unknown, or older than the history), the fields where the refused form
    differs from what is saved now.
    """
    yours = submitted_texts(kind, form)
    if base is not None:
        changed = differences(kind, base, current)
    else:
        saved = form_texts(kind, current)
        changed = [
            Difference(name=name, label=label, before=EMPTY, after=text)
            for name, (label, text) in saved.items()
            if yours.get(name, (label, text))[1] != text
        ]
    return [Difference(d.name, d.label, d.before, d.after, yours.get(d.name, (d.label, EMPTY))[1]) for d in changed]
