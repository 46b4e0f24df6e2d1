"""Results from instrument export files (CSV or XLSX), through a named column mapping.

Each row goes through the same entry as ``POST /api/results/bulk/``
(``result_record_bulk_once``): the same checks, the same audit entries, the same refusals,
all or nothing for the whole file. Errors are turned back into the file's terms: "row 14,
column V (mL): must be a number". The file's SHA-256 is recorded first in the transaction,
so a second import of the same bytes (by anyone, even at the same moment) is a replay that
answers with the first import's results.
"""
from __future__ import annotations

import hashlib
import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from django.conf import settings
from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import Conflict, DomainError, InvalidInput, NotAllowed
from analyses.imports.layouts import INSTRUMENT_SEPARATOR, LAYOUT_ROLES
from analyses.imports.reading import FileProblem, Row, read_rows
from analyses.models import AuditAction, ImportLayout, ImportMapping, ResultImport, Test
from analyses.models.testing import WORKABLE_TEST_STATES
from analyses.roles import ADMIN, LAB_MANAGER, in_role
from analyses.services.access import Actor, actor_name, fetch, refuse_raw_data_edit_by_qa, require_permission, required_text
from analyses.services.results import result_record_bulk_once
from analyses.services.uniqueness import UniqueKey, insert_or_fetch

GC_METHOD = "fac"  # the fatty-acid composition plugin, whose tests are "fac:<component>"
MAPPING_FIELDS = ("name", "layout", "columns", "extra_inputs", "default_instruments")
IMPORT_FIELDS = ("sha256", "file_name", "size_bytes", "mapping", "rows")
DEFAULT_MAX_BYTES = 5 * 1024 * 1024
ITEM_FIELD = re.compile(r"^results\.(\d+)(?:\.(.+))?$")
Progress = Callable[[str], None]


@dataclass(frozen=True)
class ImportOutcome:
    result_import: ResultImport
    replayed: bool  # the same file was imported before: nothing new was written


def _max_bytes() -> int:
    return int(getattr(settings, "OLEOTRACE_IMPORT_MAX_BYTES", DEFAULT_MAX_BYTES))


# --- mappings -----------------------------------------------------------------------------


def _text_map(raw: Any, field: str) -> dict[str, str]:
    if not isinstance(raw, Mapping) or not all(isinstance(k, str) and isinstance(v, str) and v.strip() for k, v in raw.items()):
        raise InvalidInput.for_field(field, "must be an object of names to column headings (text)")
    return {key.strip(): value.strip() for key, value in raw.items()}


def import_mapping_create(
    actor: Actor,
    *,
    name: str,
    layout: str,
    columns: Mapping[str, str],
    extra_inputs: Mapping[str, str] | None = None,
    default_instruments: Sequence[str] | None = None,
) -> ImportMapping:
    """A named mapping of a file layout's roles to the file's column headings. Lab managers
    and admins (a superuser counts as admin)."""
    if not (in_role(actor, LAB_MANAGER) or in_role(actor, ADMIN) or getattr(actor, "is_superuser", False)):
        raise NotAllowed(f"{actor_name(actor)} may not set up import mappings (lab managers and admins)")
    name = required_text(name, "name")
    if layout not in ImportLayout.values:
        raise InvalidInput.for_field("layout", f"must be one of {', '.join(ImportLayout.values)}")
    roles = {role.name: role for role in LAYOUT_ROLES[layout]}
    columns = _text_map(columns, "columns")
    unknown = sorted(set(columns) - set(roles))
    if unknown:
        raise InvalidInput.for_field(f"columns.{unknown[0]}", f"is not a role of the {layout} layout (its roles: {', '.join(roles)})")
    missing = [role.name for role in roles.values() if role.required and role.name not in columns]
    if missing:
        raise InvalidInput.for_field(f"columns.{missing[0]}", f"is required: the column heading that holds {roles[missing[0]].help}")
    extra = _text_map(extra_inputs or {}, "extra_inputs")
    taken = {role.method_input for role in roles.values() if role.method_input and role.name in columns}
    clash = sorted(taken & set(extra))
    if clash:
        raise InvalidInput.for_field(f"extra_inputs.{clash[0]}", "is already fed by a role of the layout")
    if default_instruments is None:
        default_instruments = []
    if isinstance(default_instruments, (str, bytes)) or not all(isinstance(a, str) and a.strip() for a in default_instruments):
        raise InvalidInput.for_field("default_instruments", "must be a list of asset ids")
    key = UniqueKey(ImportMapping, "name", name, f"an import mapping named {name!r} already exists")
    key.refuse_if_taken()
    with transaction.atomic():
        with key.insert():
            mapping = ImportMapping.objects.create(
                name=name, layout=layout, columns=columns, extra_inputs=extra,
                default_instruments=[a.strip() for a in default_instruments], created_by=actor, created_at=timezone.now(),
            )
        audit_append(actor, AuditAction.CREATE, mapping, created(mapping, MAPPING_FIELDS))
    return mapping


# --- rows to result entries ---------------------------------------------------------------


@dataclass(frozen=True)
class _Entry:
    row: Row  # the row an error of the entry points to, unless an input has its own
    item: dict[str, Any]
    input_rows: dict[str, Row] = field(default_factory=dict)  # GC: each component's own row


def _titrator_entries(mapping: ImportMapping, rows: Sequence[Row]) -> list[_Entry]:
    columns = mapping.columns
    wanted = {(row.cells[columns["sample"]], row.cells[columns["method"]]) for row in rows}
    tests = {
        (test.sample.label, test.method_code): test.pk
        for test in Test.objects.filter(
            sample__label__in={label for label, _ in wanted},
            method_code__in={method for _, method in wanted},
            state__in=WORKABLE_TEST_STATES,
        ).select_related("sample").only("pk", "method_code", "sample__label")
    }
    entries = []
    for row in rows:
        label, method = row.cells[columns["sample"]], row.cells[columns["method"]]
        if not label:
            raise FileProblem("is empty; give the sample's label", row=row.number, column=columns["sample"])
        test = tests.get((label, method))
        if test is None:
            raise FileProblem(f"sample {label!r} has no {method!r} test awaiting results", row=row.number, column=columns["sample"])
        inputs = {}
        for role in LAYOUT_ROLES[ImportLayout.TITRATOR]:
            if role.method_input and role.name in columns and row.cells.get(columns[role.name]):
                inputs[role.method_input] = row.cells[columns[role.name]]
        for input_name, column in mapping.extra_inputs.items():
            if row.cells.get(column):
                inputs[input_name] = row.cells[column]
        instruments = list(mapping.default_instruments)
        if "instruments" in columns and row.cells.get(columns["instruments"]):
            instruments += [a.strip() for a in row.cells[columns["instruments"]].split(INSTRUMENT_SEPARATOR) if a.strip()]
        item = {"test": test, "inputs": inputs, "titrant_lot": row.cells[columns["titrant_lot"]] or None, "instruments": instruments}
        entries.append(_Entry(row, item))
    return entries


def _gc_entries(mapping: ImportMapping, rows: Sequence[Row]) -> list[_Entry]:
    """One entry per open fatty-acid-composition test of each sample: the sample's peaks as one
    profile (every ``fac:<component>`` test of the sample gets the same run)."""
    columns = mapping.columns
    by_sample: dict[str, dict[str, Row]] = {}
    for row in rows:
        label, component = row.cells[columns["sample"]], row.cells[columns["component"]]
        if not label:
            raise FileProblem("is empty; give the sample's label", row=row.number, column=columns["sample"])
        if not component:
            raise FileProblem("is empty; give the fatty acid (C16:0, C18:1 …)", row=row.number, column=columns["component"])
        peaks = by_sample.setdefault(label, {})
        if component in peaks:
            raise FileProblem(f"{component} of sample {label!r} is already in row {peaks[component].number}",
                              row=row.number, column=columns["component"])
        peaks[component] = row
    tests: dict[str, list[int]] = {}
    for test in (Test.objects.filter(sample__label__in=by_sample, method_code__startswith=f"{GC_METHOD}:",
                                     state__in=WORKABLE_TEST_STATES)
                 .select_related("sample").only("pk", "sample__label").order_by("pk")):
        tests.setdefault(test.sample.label, []).append(test.pk)
    entries = []
    for label, peaks in by_sample.items():
        first = min(peaks.values(), key=lambda row: row.number)
        if label not in tests:
            raise FileProblem(f"sample {label!r} has no fatty-acid composition test awaiting results",
                              row=first.number, column=columns["sample"])
        inputs = {component: row.cells[columns["area"]] for component, row in peaks.items()}
        for test in tests[label]:
            item = {"test": test, "inputs": inputs, "titrant_lot": None, "instruments": list(mapping.default_instruments)}
            entries.append(_Entry(first, item, input_rows=dict(peaks)))
    return entries


def _column_of(mapping: ImportMapping, field: str | None) -> str | None:
    """The file's column heading behind a result-entry field (``inputs.sample_volume`` …)."""
    columns = mapping.columns
    if field is None:
        return None
    if field == "test":
        return columns.get("sample")
    if field.startswith("instruments"):
        return columns.get("instruments", "(the mapping's default instruments)")
    if field == "titrant_lot":
        return columns.get("titrant_lot")
    if field.startswith("inputs.") and mapping.layout == ImportLayout.GC:
        return columns["area"]
    if field.startswith("inputs."):
        name = field.removeprefix("inputs.")
        for role in LAYOUT_ROLES[mapping.layout]:
            if role.method_input == name and role.name in columns:
                return columns[role.name]
        if name in mapping.extra_inputs:
            return mapping.extra_inputs[name]
        return f"(no column feeds the input {name!r}; add it to the mapping's extra inputs)"
    return None


def _in_file_terms(exc: DomainError, mapping: ImportMapping, entries: Sequence[_Entry]) -> DomainError:
    """A bulk entry's error ("results.3.inputs.sample_volume: …") named by row and column."""
    names = list(exc.fields) or [exc.detail.split(":", 1)[0]]
    match = next((ITEM_FIELD.match(name) for name in names if ITEM_FIELD.match(name)), None)
    if match is None:
        return exc
    entry = entries[int(match[1])]
    input_name = (match[2] or "").removeprefix("inputs.")
    row = entry.input_rows.get(input_name, entry.row).number
    column = _column_of(mapping, match[2])
    reasons = exc.fields.get(match[0]) or [exc.detail.split(": ", 1)[-1]]
    where = f"row {row}, column {column}" if column else f"row {row}"
    message = f"{where}: {'; '.join(reasons)}"
    if isinstance(exc, Conflict):
        return Conflict(message, missing=[where])
    if isinstance(exc, InvalidInput):
        return InvalidInput(message, {"file": [message]})
    return type(exc)(message)


def _file_problem(problem: FileProblem) -> InvalidInput:
    return InvalidInput(str(problem) if problem.row else f"file: {problem}", {"file": [str(problem)]})


# --- the import ---------------------------------------------------------------------------


def results_import(
    actor: Actor,
    *,
    content: bytes,
    file_name: str,
    mapping: ImportMapping | int | str,
    progress: Progress | None = None,
) -> ImportOutcome:
    """Import ``content`` (a CSV or XLSX export) through ``mapping`` (an instance, id or
    name): every row becomes a result, all or nothing. Who may, and what is refused, as for
    bulk result entry; plus 400 naming ``file`` for a file too large, of another kind, with
    a formula, a missing column, or a bad cell (by row and column)."""
    require_permission(actor, "record_result", "import results")
    refuse_raw_data_edit_by_qa(actor)
    say = progress or (lambda message: None)
    if isinstance(mapping, str):  # a name, as the API and the command take it
        found = ImportMapping.objects.filter(name=mapping).first()
        if found is None:
            raise InvalidInput.for_field("mapping", f"no import mapping is named {mapping!r}")
        mapping = found
    else:
        mapping = fetch(ImportMapping, mapping, label="import mapping")
    file_name = required_text(file_name, "file")
    if not isinstance(content, (bytes, bytearray)) or not content:
        raise InvalidInput.for_field("file", "is empty")
    if len(content) > _max_bytes():
        raise InvalidInput.for_field("file", f"is {len(content):,} bytes; the limit is {_max_bytes():,} (OLEOTRACE_IMPORT_MAX_BYTES)")
    sha256 = hashlib.sha256(content).hexdigest()

    earlier = ResultImport.objects.filter(sha256=sha256).select_related("mapping").first()
    if earlier is not None:
        return _replay(earlier, mapping)

    required = [mapping.columns[role.name] for role in LAYOUT_ROLES[mapping.layout] if role.name in mapping.columns]
    entries: list[_Entry] = []
    peaks: list[Row] = []  # GC: a sample's peaks may span chunks, so they are grouped at the end
    try:
        for chunk in read_rows(bytes(content), file_name, required):
            if mapping.layout == ImportLayout.GC:
                peaks.extend(chunk)
                say(f"read {len(peaks):,} rows")
            else:
                entries.extend(_titrator_entries(mapping, chunk))
                say(f"read {len(entries):,} rows")
        if mapping.layout == ImportLayout.GC:
            entries = _gc_entries(mapping, peaks)
    except FileProblem as problem:
        raise _file_problem(problem) from None
    if not entries:
        raise InvalidInput.for_field("file", "has no data rows")

    with transaction.atomic():
        # the file's hash first: a second import of the same bytes waits here, then replays
        result_import, new = insert_or_fetch(
            ResultImport, {"sha256": sha256},
            lambda: ResultImport.objects.create(
                sha256=sha256, file_name=file_name[:255], size_bytes=len(content), mapping=mapping,
                rows=len(peaks) if mapping.layout == ImportLayout.GC else len(entries), imported_by=actor, imported_at=timezone.now(),
            ),
        )
        if not new:
            return _replay(result_import, mapping)
        try:
            batch = result_record_bulk_once(actor, [entry.item for entry in entries])
        except DomainError as exc:
            raise _in_file_terms(exc, mapping, entries) from None
        result_import.result_ids = [result.pk for result in batch.results]
        result_import.save(update_fields=["result_ids"])
        audit_append(actor, AuditAction.CREATE, result_import,
                     {**created(result_import, IMPORT_FIELDS), "results": [None, len(batch.results)]})
    say(f"recorded {len(entries):,} results from {file_name}")
    return ImportOutcome(result_import, replayed=False)


def _replay(earlier: ResultImport, mapping: ImportMapping) -> ImportOutcome:
    if earlier.mapping_id != mapping.pk:
        raise Conflict(
            f"this file was imported on {earlier.imported_at:%Y-%m-%d %H:%M} UTC with the mapping "
            f"{earlier.mapping.name!r}; importing it again with another mapping would enter its results twice",
            missing=[f"import {earlier.pk}"],
        )
    return ImportOutcome(earlier, replayed=True)
