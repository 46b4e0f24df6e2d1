"""The API's descriptions as a lab's integrator reads them, in one place.

Code comments and docstrings are written for the people who change the code; the OpenAPI
schema is read by the people who connect a balance export, an ERP or a dashboard to the
lab. Their texts live here, keyed by operation id and by schema component name, so they
can be read and reviewed together. ``analyses.api.schema.integrator_texts`` puts them in
the schema, where an entry replaces a view's own ``description=`` (a view keeps one only for an
operation that has no entry here); ``tests/analyses/api/test_schema_texts.py`` fails on an operation or a schema
without one, on developer phrasing, and on an entry here that names nothing in the schema.

Each operation says what it does, who may call it and what it refuses. The roles are the
four groups: analyst, lab_manager, qa_reviewer, admin.
"""
from __future__ import annotations

SIGNED_IN = "Any signed-in user may call it."
PAGED = "Paged: `page` and `page_size` (up to 200)."

OPERATIONS: dict[str, str] = {
    # --- accounts and tokens ---
    "auth_token_create": (
        "Exchanges a user name and password for a new API token, sent back this once and never again: store it. "
        "Give the token a `name` that says where it is used (\"titrator PC 2\"). Anyone may call it. A wrong user "
        "name or password is refused with 400; repeated failures lock the account and the calling address for a "
        "while (429 with `Retry-After`)."
    ),
    "auth_tokens_list": (
        "Lists your own API tokens: name, first characters, when each was made, when it expires and when it was "
        "last used. The tokens themselves are never shown again. " + SIGNED_IN + " " + PAGED
    ),
    "auth_tokens_revoke_create": (
        "Revokes one of your own tokens at once; requests that carry it are refused from then on. The revocation "
        "is kept in the audit trail. Someone else's token answers 404."
    ),
    "me_retrieve": "Who you are signed in as: user name, roles and the permissions they give. " + SIGNED_IN,
    "users_list": (
        "Active users with their roles, e.g. `?role=analyst` to find whom to give tests to. For lab managers and "
        "admins; others get 403. " + PAGED
    ),
    # --- methods and calculations ---
    "methods_list": (
        "Every analytical method the service knows, with its standards, inputs and their units and bounds, result "
        "unit, reporting precision, repeatability, default specification limits and safety cautions. Anyone may "
        "call it, signed in or not."
    ),
    "methods_retrieve": (
        "One method by its code (`av`, `pv`, `iv` …): what it needs as input, with units and the range each input "
        "may take, and how its result is reported. Anyone may call it. An unknown code answers 404."
    ),
    "calculations_create": (
        "Works out one determination from its inputs, as a hand calculation would, and judges it against the limits "
        "given or a Codex oil type's defaults. Nothing is stored and nothing enters the audit trail: to record a "
        "result, use `POST /api/results/`. Anyone may call it. Bad inputs are refused with 400 naming each field "
        "(`inputs.sample_mass`)."
    ),
    # --- instrument file import ---
    "import_mappings_list": "Import mappings: which column of a lab's export file holds what. " + SIGNED_IN + " " + PAGED,
    "import_mappings_create": (
        "Names a mapping from a file layout's roles to your export's column headings: for the titrator layout, "
        "sample, method, titre, titrant lot (required), blank, sample mass and instruments; inputs a method needs "
        "beyond those go in `extra_inputs`. For lab managers and admins. A name in use, a role the layout does not "
        "have, or a required role left out is refused with 400 naming it (`columns.titre`)."
    ),
    "import_mappings_retrieve": "One import mapping. " + SIGNED_IN,
    "imports_list": "Files imported, newest first, with their SHA-256, mapping, rows and the results they entered. " + SIGNED_IN + " " + PAGED,
    "imports_create": (
        "Imports results from an instrument export (CSV in UTF-8, or XLSX; first sheet), one result per row, all or "
        "nothing, through the same checks as entering them by hand: the tests must be yours and awaiting "
        "results, the titrant lot and instruments usable. For analysts and admins; a member of the QA group never "
        "enters raw data. Refused with 400 naming `file`: a file beyond the size limit, another kind of file, a "
        "missing column, an Excel formula (never evaluated: paste values), or a bad cell, named by row and column "
        "(\"row 14, column V (mL): must be a number\"; the heading is row 1). The same file again (same SHA-256) "
        "answers with the first import and the header `Oleotrace-Replayed: true`; nothing is entered twice. With "
        "another mapping it answers 409."
    ),
    "imports_retrieve": "One imported file and the results it entered. " + SIGNED_IN,
    # --- products and specifications ---
    "products_list": "Products (oil grades) with their oil type. " + SIGNED_IN + " " + PAGED,
    "products_create": (
        "Creates a product. For lab managers and admins. A code already in use, or an unknown oil type, is refused "
        "with 400 naming the field."
    ),
    "products_retrieve": "One product. " + SIGNED_IN,
    "specifications_list": (
        "Specifications, every version, drafts included, filtered by product or status. " + SIGNED_IN + " " + PAGED
    ),
    "specifications_create": (
        "Drafts the product's next specification version with its lines. Each line names a method and its limits, "
        "or a Codex oil type whose default limits the method carries (`codex_oil_type`, e.g. \"refined\"), and may "
        "choose a decision rule. For lab managers, QA and admins. Errors name the line: `lines.2.maximum`."
    ),
    "specifications_retrieve": "One specification version with its lines. " + SIGNED_IN,
    "specifications_approve_create": (
        "Approves a draft, which takes effect from its date and is never edited again. QA only (membership of the "
        "qa_reviewer group; no other role or flag stands in). A specification that is not a draft answers 409."
    ),
    "specifications_lines_update": (
        "Replaces every line of a draft specification at once. For lab managers, QA and admins. An approved "
        "specification answers 409 (revise it instead); bad lines are refused with 400 naming them."
    ),
    "specifications_revise_create": (
        "Starts a new draft version from an approved specification, optionally with new lines. For lab managers, "
        "QA and admins. Revising a draft answers 409."
    ),
    # --- lots ---
    "lots_list": "Lots, filtered by product, state, origin or code. " + SIGNED_IN + " " + PAGED,
    "lots_create": (
        "Creates a production lot or an incoming delivery, with its customer where it has one. For lab managers "
        "and admins. A code in use, an unknown product or a production date in the future is refused with 400 "
        "naming the field."
    ),
    "lots_retrieve": "One lot and its state. " + SIGNED_IN,
    "lots_readiness_retrieve": (
        "Whether the lot could be released now and, if not, what is missing: tests not accepted, open "
        "investigations, results awaiting review; plus warnings QA should read first (conditional passes, "
        "results outside a method's validated range). " + SIGNED_IN
    ),
    "lots_release_create": (
        "Releases the lot for shipment against its specification and issues its certificate of analysis. QA only "
        "(membership of the qa_reviewer group). It is an electronic signature: `password` is the releasing user's "
        "own, re-entered (400 naming `password` when missing or wrong; wrong ones count towards the login "
        "lock-out, which answers 429). Its meaning, \"released for shipment against specification vN\", is kept in "
        "the audit trail. A lot that is not ready answers 409 listing what is missing."
    ),
    "lots_reject_create": (
        "Rejects the lot with a reason; its open samples are rejected too. QA only. Signed like a release: "
        "`password` re-entered, 400 naming it when missing or wrong. A lot already decided answers 409."
    ),
    "lots_certificate_retrieve": (
        "The certificate of analysis of a released lot as issued, in full detail for integrations (ERP, customer "
        "portals): internal references included. `?version=` gives an earlier version. " + SIGNED_IN + " A lot not "
        "released answers 404."
    ),
    "lots_certificate.pdf_retrieve": (
        "The certificate of analysis as a PDF for the customer: the lab, customer, product and lot, specification "
        "version, dates, each parameter with method, result, limits and verdict, the decision rule, the statement "
        "of conformity, and who released it. `?version=` gives an earlier version. " + SIGNED_IN
    ),
    "lots_certificate.html_retrieve": (
        "The certificate of analysis as an HTML page, the same content as the PDF. " + SIGNED_IN
    ),
    "lots_certificates_list": (
        "Every version of the lot's certificate, the current one first, each with what it replaces and why it "
        "was reissued. Empty before release. " + SIGNED_IN
    ),
    "lots_certificate_reissue_create": (
        "Reissues the certificate of a released lot as a new version with a new number, marked as replacing the "
        "current one, which stays retrievable. `customer` corrects the lot's customer first. QA only, signed with "
        "`password` re-entered. A lot not released answers 409."
    ),
    "lots_audit_trail_list": (
        "Every recorded change to the lot and everything on it (samples, tests, results, investigations, "
        "certificates), oldest first, with who, when, why and the chained hashes that prove nothing was altered. "
        "For lab managers, QA and admins. " + PAGED
    ),
    # --- samples ---
    "samples_list": (
        "Samples, filtered by lot, product, kind or state. " + SIGNED_IN + " " + PAGED
    ),
    "samples_create": (
        "Registers a sample taken from an open lot (routine, retain, QC check or stability pull). For lab managers "
        "and admins. A lot that is released or rejected answers 409; a label in use is refused with 400."
    ),
    "samples_retrieve": "One sample with its tests, their states and verdicts. " + SIGNED_IN,
    "samples_receive_create": (
        "Receives a registered sample into the lab: its tests are created from the specification in effect, with "
        "priority and due date. For lab managers and admins. A sample not registered, or a product without an "
        "approved specification, answers 409."
    ),
    "samples_hold_create": (
        "Puts a sample on hold with a reason (a damaged container, a question to the customer); its tests stay in "
        "the work queues, shown as held, and cannot be given out. For lab managers, QA and admins. A sample "
        "already held or finished answers 409."
    ),
    "samples_resume_create": (
        "Takes a sample off hold, back to the state it was held from. For lab managers, QA and admins. A sample "
        "not on hold answers 409."
    ),
    "samples_cancel_create": (
        "Cancels a sample with a reason; its open tests are cancelled. For lab managers and admins. A sample with "
        "an open investigation, or one already finished, answers 409."
    ),
    "samples_audit_trail_list": (
        "Every recorded change to the sample, its tests and results, oldest first, with who, when and why. For "
        "lab managers, QA and admins. " + PAGED
    ),
    # --- tests and work queues ---
    "tests_list": (
        "Tests, filtered by state, method, sample, lot, product, assignee or due dates. " + SIGNED_IN + " " + PAGED
    ),
    "tests_retrieve": "One test with its replicates' mean, reported value, verdict and review warnings. " + SIGNED_IN,
    "tests_mine_list": "Your own queue: tests given or sent back to you that await results. " + SIGNED_IN + " " + PAGED,
    "tests_queue_list": (
        "The open tests of one method (pending, assigned, sent back, awaiting review), most urgent first, then by "
        "due date. A test whose sample is on hold stays listed, with the hold's state and reason, and is not "
        "counted overdue; it cannot be assigned until the sample is resumed (409). Filter held tests in or out "
        "with `on_hold`. " + SIGNED_IN + " An unknown method is a 404, an `on_hold` other than true or false a 400. "
        + PAGED
    ),
    "tests_review_list": (
        "Tests with every result entered that you may review: never those whose results you entered yourself "
        "(four eyes). " + SIGNED_IN + " " + PAGED
    ),
    "tests_assign_create": (
        "Gives tests to an analyst, or moves them to another, all or nothing, optionally with priority and due "
        "date; pending tests become assigned, others keep their state. For lab managers and admins. An error "
        "names the item (`tests.3`); a test that cannot be given (finished, or its sample on hold) answers 409 "
        "naming it."
    ),
    "tests_accept_create": (
        "Accepts a test whose results are all entered. Anyone who may review tests, except whoever entered its "
        "results (four eyes). A result out of specification opens an investigation. A test not awaiting review "
        "answers 409."
    ),
    "tests_send_back_create": (
        "Sends a test back for retest with a reason; its results are invalidated, kept, and the test returns to "
        "its analyst's queue. Anyone who may review tests, except whoever entered them. A test not awaiting "
        "review answers 409."
    ),
    "tests_results_list": (
        "Every result of a test, corrected and invalidated ones included, each with its version. " + SIGNED_IN + " " + PAGED
    ),
    # --- results ---
    "results_create": (
        "Enters one replicate of a test given to you, with the titrant lot and the instruments used; the "
        "titrant's strength comes from its standardisation, never typed. For analysts and admins; a member of the "
        "QA group never enters raw data. Input errors name the input (`inputs.sample_mass`); an expired titrant "
        "lot or an instrument out of calibration answers 409 naming it. A repeat with the same Idempotency-Key "
        "returns the first result with the same status and the header `Oleotrace-Replayed: true`."
    ),
    "results_bulk_create": (
        "Enters many results in one request, all or nothing: the first bad item rolls everything back and is named "
        "(`results.2.inputs.sample_mass`). Who may call it, and what is refused, as for one result. With the "
        "Idempotency-Key header, item i without its own key uses \"<key>#i\"; a repeat returns the first answer "
        "with the header `Oleotrace-Replayed: true`."
    ),
    "results_retrieve": "One result: inputs as written, value, reported value, verdict and what it was measured with. " + SIGNED_IN,
    "results_correct_create": (
        "Corrects a result before its test is accepted: a new version with the reason; the old one is kept, "
        "marked superseded. For analysts and admins, never QA. A test already accepted answers 409."
    ),
    "results_uncertainty_retrieve": (
        "The result's measurement uncertainty budget: each input's value, standard uncertainty u, sensitivity "
        "coefficient, contribution and share, by first-order propagation (GUM, JCGM 100:2008), the expanded U with "
        "k = 2, and the same for the mean of the test's replicates. " + SIGNED_IN
    ),
    # --- investigations ---
    "investigations_list": (
        "Out-of-specification investigations, filtered by state, lot or method. " + SIGNED_IN + " " + PAGED
    ),
    "investigations_retrieve": "One investigation: the result that opened it, the limits, and its conclusion once closed. " + SIGNED_IN,
    "investigations_close_create": (
        "Closes an investigation with a conclusion and findings; the answer's `effect` says in words what the close "
        "changed. On an open lot `confirmed` rejects the lot and is signed with `password` re-entered (400 naming "
        "`password` when missing or wrong), and `lab_error` creates a retest. On a released lot (a post-release "
        "investigation) `no_action` leaves the lot as it is, and `hold_notice` with `hold_reason` marks it "
        "\"released, under investigation\" and alerts QA. QA and admins (a hold notice: QA only). An unknown "
        "conclusion is refused with 400 listing the valid ones; `confirmed` on a released lot, or an investigation "
        "already closed, answers 409."
    ),
    "turnaround_list": (
        "Hours from sample receipt to test acceptance per method: count, mean and median, over an optional date "
        "range. For lab managers and admins."
    ),
    # --- stability ---
    "stability_studies_list": "Stability studies, filtered by product or state. " + SIGNED_IN + " " + PAGED,
    "stability_studies_create": (
        "Creates a stability study: product, lots, storage conditions, pull points, attributes with their limits, "
        "and the claimed shelf life. For lab managers, QA and admins. Errors name the field "
        "(`conditions.1.temperature_c`)."
    ),
    "stability_studies_retrieve": "One study with its conditions, pull points and latest evaluation. " + SIGNED_IN,
    "stability_studies_close_create": (
        "Closes a study with a reason; no more pulls are taken. For lab managers, QA and admins. A closed study "
        "answers 409."
    ),
    "stability_studies_evaluate_create": (
        "Evaluates the study now: kinetics per condition, ICH Q1E shelf life with its extrapolation branch, "
        "Arrhenius, and alerts when the predicted shelf life falls short of the claim. The service also evaluates "
        "every running study each hour and after each accepted pull result. For lab managers, QA and admins."
    ),
    "stability_studies_plot_retrieve": (
        "The stability plot's data: points per condition, fitted line, one-sided 95 % bound, limit and shelf "
        "life. " + SIGNED_IN
    ),
    "stability_studies_plot._retrieve": "The stability plot as a PNG or SVG picture. " + SIGNED_IN,
    "stability_studies_pull_points_list": "A study's pull points with their due dates and samples. " + SIGNED_IN + " " + PAGED,
    # --- alerts and trends ---
    "alerts_list": (
        "Alerts, newest first, filtered by state, severity, source, rule, product or lot: trend rules that fired, "
        "stability findings, titrant lots and instruments falling due. " + SIGNED_IN + " " + PAGED
    ),
    "alerts_retrieve": "One alert with the points that raised it. " + SIGNED_IN,
    "alerts_acknowledge_create": (
        "Acknowledges an alert with a comment, kept in the audit trail. QA and admins. An alert already "
        "acknowledged answers 409."
    ),
    "trends_baselines_list": "Control baselines: the mean and standard deviation per series. " + SIGNED_IN + " " + PAGED,
    "trends_baselines_create": (
        "Enters or replaces a series' mean and standard deviation, with a reason. QA and admins. A series that "
        "does not exist, or a standard deviation that is not positive, is refused with 400 naming the field."
    ),
    "trends_series_list": (
        "Every trend series (QC check samples per control material and method; production results per product "
        "and method) with its number of results and its baseline. " + SIGNED_IN + " " + PAGED
    ),
    "trends_series_chart_retrieve": (
        "A control chart's data: points, centre line, limits, flagged points and the rule episodes, as a "
        "Shewhart chart with the series' rules or as EWMA (`?chart=ewma`). " + SIGNED_IN + " An unknown series "
        "answers 404; one with too few results to draw, 400."
    ),
    "trends_series_chart._retrieve": "The control chart as a PNG or SVG picture. " + SIGNED_IN,
    # --- reagents and instruments ---
    "reagent_kinds_list": "Reagent kinds: titrants with their nominal strength, validity and replicate limit. " + SIGNED_IN + " " + PAGED,
    "reagent_kinds_create": (
        "Registers a reagent kind (e.g. 0.1 mol/L KOH in ethanol). For lab managers and admins. A name in use is "
        "refused with 400."
    ),
    "reagent_kinds_retrieve": "One reagent kind. " + SIGNED_IN,
    "reagent_kinds_change_create": (
        "Changes a kind's validity or replicate limit, with a reason kept in the audit trail. For lab managers "
        "and admins."
    ),
    "reagent_lots_list": "Titrant lots with whether each may be used now, and why not. " + SIGNED_IN + " " + PAGED,
    "reagent_lots_create": (
        "Registers a titrant lot as prepared or received. For analysts, lab managers and admins. A code in use, "
        "or an expiry before preparation, is refused with 400 naming the field."
    ),
    "reagent_lots_retrieve": "One titrant lot with its current standardisation. " + SIGNED_IN,
    "reagent_lots_impact_retrieve": (
        "Every result, sample and lot that used this titrant lot, released lots flagged: what to look at when a "
        "standardisation turns out wrong. " + SIGNED_IN
    ),
    "reagent_lots_standardisations_list": "A titrant lot's standardisations, newest first. " + SIGNED_IN + " " + PAGED,
    "reagent_lots_standardisations_create": (
        "Standardises a titrant lot against a primary standard from replicate titrations; its concentration and "
        "uncertainty follow. For analysts and admins. Replicates that spread beyond the kind's limit, or an "
        "unusable balance or burette, answer 409 naming them."
    ),
    "standardisations_retrieve": "One standardisation with its replicates and uncertainty. " + SIGNED_IN,
    "standardisations_supersede_create": (
        "Replaces a wrong standardisation by a new one with a reason; the old one is kept, superseded. For analysts "
        "and admins. One already superseded answers 409."
    ),
    "instruments_list": "Instruments with whether each may be used now, and why not. " + SIGNED_IN + " " + PAGED,
    "instruments_create": (
        "Registers an instrument (balance, burette, titrator …) with its routine check interval. For lab managers "
        "and admins. An asset id in use is refused with 400."
    ),
    "instruments_retrieve": "One instrument with its calibration and last check. " + SIGNED_IN,
    "instruments_calibrations_list": "An instrument's calibrations, newest first. " + SIGNED_IN + " " + PAGED,
    "instruments_calibrations_create": (
        "Records a calibration with its certificate, due date and standard uncertainty. For lab managers and "
        "admins. Dates out of order are refused with 400 naming the field."
    ),
    "instruments_checks_list": "An instrument's routine checks, newest first. " + SIGNED_IN + " " + PAGED,
    "instruments_checks_create": (
        "Records a routine check (a check weight on a balance, a reference filter), passed or failed against its "
        "tolerance. For analysts and admins. A check kind that does not suit the instrument is refused with 400."
    ),
    "instruments_impact_retrieve": (
        "Every result, sample and lot measured with this instrument in a period, released lots flagged: what to "
        "look at after a failed check. " + SIGNED_IN
    ),
}

# Schema components. "…Request" components are what a client sends; every one refuses a
# field it does not know (a misspelt "maximun" is named in the 400, not ignored).
SCHEMAS: dict[str, str] = {
    # what a client sends
    "AcknowledgeRequest": "An acknowledgement of an alert: the comment QA leaves with it.",
    "AttributeInRequest": "One attribute a stability study follows: the method and its limits, and what counts as a significant change.",
    "BaselineInRequest": "A control baseline for a series that exists: its mean, standard deviation and why it is set.",
    "BulkResultItemRequest": "One replicate in a bulk entry: the test, the inputs as written, the titrant lot and instruments, and an optional key of its own.",
    "CalculationRequestRequest": "A calculation to work out: the method, its inputs, and the limits (or Codex oil type) to judge it against.",
    "CalibrationCreateRequest": "A calibration of an instrument: dates, certificate, whether it passed, and its standard uncertainty and tolerance.",
    "ConditionInRequest": "One storage condition of a stability study: temperature and light.",
    "CredentialsRequest": "A user name, password and a name for the new token.",
    "InstrumentCheckCreateRequest": "A routine check of an instrument: the reference used, its nominal and measured values, and the tolerance.",
    "ImportMappingCreateRequest": "A mapping to name: its layout, the column heading of each role, extra method inputs and the instruments used for every row.",
    "ResultImportUploadRequest": "An export file (multipart upload) and the name of the mapping to read it with.",
    "PostReleaseCorrectionProposeRequest": "A correction of a released lot's result: the corrected inputs, as the worksheet shows them, and why.",
    "PostReleaseCorrectionApproveRequest": "QA's approval of a correction: the approver's password re-entered, and an optional note.",
    "InstrumentCreateRequest": "An instrument to register: asset id, kind, location and how often it is checked.",
    "InvestigationCloseRequest": "How an investigation ends: its conclusion and the findings behind it.",
    "LotCreateRequest": "A lot to create: code, product, origin, supplier or customer, container, quantity and production date (not in the future).",
    "NoteRequest": "An optional remark kept in the audit trail.",
    "ProductCreateRequest": "A product to create: code, name, oil type and a description.",
    "PullInRequest": "One pull point of a stability study: how long after the start, in days or months.",
    "ReagentKindChangeRequest": "A change to a reagent kind's validity or replicate limit, with the reason.",
    "ReagentKindCreateRequest": "A reagent kind to register: substance, solvent, nominal strength, validity and the limit on replicate spread.",
    "ReagentLotCreateRequest": "A titrant lot to register: its kind, code, preparation and expiry dates, and who prepared it.",
    "ReasonRequest": "The reason for the change, kept in the audit trail.",
    "ReissueRequest": "A certificate reissue: the reason, an optional corrected customer, and the signer's password re-entered.",
    "RejectRequest": "A lot rejection: the reason and the signer's password re-entered.",
    "ReleaseRequest": "A lot release: an optional note and the signer's password re-entered.",
    "ResultCorrectRequest": "A correction of a result not yet accepted: the corrected inputs, titrant lot and instruments, and the reason.",
    "ResultRecordBulkRequest": "Many replicates to enter, all or nothing.",
    "ResultRecordRequest": "One replicate to enter: the test, the inputs as written, the titrant lot and the instruments used.",
    "SampleReceiveRequest": "A sample's receipt: its condition, where it is stored, when it arrived, priority and due date.",
    "SampleRegisterRequest": "A sample to register: the lot it was taken from, its kind, label and when it was taken.",
    "SpecificationCreateRequest": "A new specification version: product, effective date, a note and its lines.",
    "SpecificationLineInputRequest": "One line of a specification: a method with its limits (or a Codex oil type's defaults), how results are compared with them, the decision rule, and whether the line is critical to release.",
    "SpecificationLinesRequest": "Every line of a draft specification, replacing the ones it has.",
    "SpecificationReviseRequest": "A new draft from an approved specification: effective date, note and optionally new lines.",
    "StandardisationRecordRequest": "A standardisation: the primary standard, its purity, the replicate titrations, the blank, and the balance and burette used.",
    "StandardisationSupersedeRequest": "A replacement standardisation, as for a new one, with the reason the old one was wrong.",
    "StudyCreateRequest": "A stability study to create: product, lots, storage, conditions, pull points, attributes and the claimed shelf life.",
    "TestAssignRequest": "Tests to give to an analyst, with an optional priority and due date.",
    "TokenRevokeRequest": "Why the token is revoked (optional).",
    # what the service answers
    "Alert": "Something that needs a person: a trend rule that fired, a stability finding, a titrant lot or instrument falling due; with what raised it and who acknowledged it.",
    "Attribute": "An attribute a stability study follows, with its limits and significant change.",
    "AuditEntry": "One recorded change: who, when, what changed (before and after), why, and the hashes chaining it to the entries before and after.",
    "Baseline": "A series' control baseline: mean and standard deviation, how many points it rests on, and whether QA entered it or it was established from the first results.",
    "Budget": "An uncertainty budget: the value, each input's term, the combined standard uncertainty and the expanded U with its coverage factor.",
    "BudgetTerm": "One input's part in an uncertainty budget: its value, standard uncertainty u, sensitivity coefficient, contribution and share, and where u comes from.",
    "CalculationLimits": "The limits a calculation was judged against, how the value was compared with them, and where they come from.",
    "CalculationResult": "A worked-out determination: the value, exact and as reported with its unit, the inputs, the limits and the verdict. Nothing is stored.",
    "Calibration": "A recorded calibration of an instrument.",
    "Certificate": "A certificate of analysis as issued: its number and version, what it replaces, who issued it and when, and its full content.",
    "CertificateContent": "What the certificate states: laboratory, customer, product and lot, specification, dates, each parameter with its result, limits and verdict, the decision rule and the statement of conformity.",
    "CertificateDates": "When the lot was sampled, received and tested (first and last).",
    "CertificateInstrument": "An instrument a result was measured with, with its calibration and last check.",
    "CertificateLaboratory": "The laboratory that issues the certificate.",
    "CertificateLot": "The lot the certificate is for.",
    "CertificateMeasuredWith": "What a replicate was measured with: titrant lot, standardisation, titrant strength and its uncertainty, and instruments.",
    "CertificateProduct": "The product the lot is of.",
    "CertificateResult": "One parameter on the certificate: method and standards, replicates, the reported result with its unit, the limits and the verdict.",
    "CertificateSpan": "A range of dates: the first and the last.",
    "CertificateSpecification": "The specification version the lot was released against, and its approval.",
    "Condition": "A storage condition of a stability study.",
    "Error": "Why a request was refused (401, 403, 404, 409); a 409 may list what is missing.",
    "InvalidInputError": "Why a request was refused with 400: every offending field named, nested ones with dots (`results.2.inputs.sample_mass`).",
    "ImportMapping": "A named mapping of a file layout's roles to the column headings of a lab's export.",
    "ResultImport": "A file imported: its name, SHA-256 and size, the mapping, how many rows, and the results it entered.",
    "Instrument": "An instrument with its calibration, last check, and whether it may be used now (and why not).",
    "InstrumentCheck": "A recorded routine check of an instrument and whether it passed.",
    "Investigation": "An out-of-specification investigation: the result that opened it, the limits, its state and conclusion.",
    "IssuedToken": "A new API token: the only time the token itself is shown. Keep it secret.",
    "Lot": "A production lot or incoming delivery, its state and who decided it.",
    "Me": "The signed-in user, with roles and permissions.",
    "Method": "An analytical method: standards, inputs with units and bounds, result unit and precision, repeatability, default limits, scope, blank and cautions.",
    "Product": "A product (oil grade).",
    "PullPoint": "A stability pull point: condition, when it is due, and the sample taken.",
    "Readiness": "Whether a lot could be released now, what is missing, and warnings to read first.",
    "ReagentKind": "A kind of titrant, with its nominal strength, validity and replicate limit.",
    "ReagentLot": "A titrant lot, its current standardisation, and whether it may be used now (and why not).",
    "Result": "One replicate's result: inputs as written, the value exact and as reported, unit, verdict, version and what it was measured with.",
    "ResultInstrument": "An instrument a result was measured with, with its calibration and last check at the time.",
    "ResultUncertainty": "A result's uncertainty budget and its test mean's, with the decision rule of its specification line.",
    "RevokedToken": "A token just revoked.",
    "Sample": "A sample: its kind, state (and why, when held), lot, specification, and who registered and received it.",
    "SampleTest": "A test as a line of its sample.",
    "Series": "A trend series: its kind, method, number of results and baseline.",
    "Specification": "A specification version with its lines, status and approval.",
    "SpecificationLine": "A line of a specification: method, limits, comparison, decision rule, basis and where the limits come from.",
    "Standardisation": "A standardisation of a titrant lot: primary standard, replicates, concentration and its uncertainty.",
    "Study": "A stability study with its conditions, attributes and latest evaluation.",
    "Test": "A test: its sample and lot, method, state, assignee, the replicates' mean, reported value, verdict and review warnings.",
    "TestAssignment": "A test as the assignment left it.",
    "Token": "An API token as listed: never the token itself.",
    "Turnaround": "Turnaround of one method: how many tests, and mean and median hours from receipt to acceptance.",
    "User": "A user and their roles.",
    "NullEnum": "No value (null).",
}

# What must not reach an integrator's eyes: words about the code, not the lab.
DEVELOPER_WORDS = ("serializer", "selector", "filterset", "queryset", "docstring", "viewset", "kwargs")
