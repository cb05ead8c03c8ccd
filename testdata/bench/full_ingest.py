#!/usr/bin/python3
"""Plain loader for comparison with `unshelved ingest registry`: the
standard library's json and sqlite3, one thread, the schema created by
unshelved's own migration files, and the same rows in the same tables
(one row per the same element, same positions and keys). Reads a folder
(walked in lexical order), a single study file, a search page, a
top-level array of studies, JSON lines (.jsonl, .ndjson), the bulk zip,
and gzip-compressed forms of these. Neutral CSV files are not read.

    full_ingest.py DB PATH

Like unshelved it replaces a stored trial only by a newer version
(last_update_posted, then version_holder), leaves one with the same
content hash alone, rejects a trial id seen twice in one file and a
record without a valid NCT id, commits every 2,000 records, and records
each file read without rejections in source_files.

Columns filled by a simpler rule than unshelved's:
  trials.content_hash    SHA-256 of the record's raw bytes (unshelved
                         hashes them with the whitespace between tokens
                         removed); for page and array elements, of
                         json.dumps of the element
  trials.ingested_at, source_files.started_at/finished_at
                         current UTC time, whole seconds
  outcomes.dispersion    looked up in a table of the registry's codes
                         and usual texts, else the text itself
  numbers kept as text   a JSON number's text is Python's str() of the
                         parsed value (unshelved keeps the original text)
Exact by construction: outcome_index (= outcome_pos), result_groups.role
and trials.publication ('' for API records), p_op and p_value.
"""
import gzip
import hashlib
import io
import json
import os
import sqlite3
import sys
import time
import zipfile

BATCH = 2000

# Column lists after trial_id, in the order the row tuples are built.
TABLES = [
    ("trials", "registry org_study_id brief_title official_title acronym organization_name organization_class"
               " overall_status last_known_status why_stopped status_verified study_type allocation"
               " intervention_model primary_purpose masking enrollment enrollment_type lead_sponsor_name"
               " lead_sponsor_class start_date start_date_type primary_completion_date"
               " primary_completion_date_type completion_date completion_date_type first_posted_date"
               " first_posted_date_type results_first_posted results_first_posted_type last_update_posted"
               " last_update_posted_type version_holder has_results publication content_hash source_path"
               " source_sha256 source_position ingested_at"),
    ("trial_ids", "kind pos other_id id_type domain link"),
    ("trial_phases", "pos phase"),
    ("trial_terms", "kind pos term"),
    ("trial_collaborators", "pos name class"),
    ("arms", "arm_pos label type description"),
    ("arm_intervention_names", "arm_pos pos name"),
    ("interventions", "intervention_pos type name description"),
    ("intervention_names", "intervention_pos kind pos name"),
    ("registered_outcomes", "pos kind measure description time_frame"),
    ("trial_references", "pos pmid type citation"),
    ("outcomes", "outcome_pos outcome_index type title description population time_frame reporting_status"
                 " param_type dispersion_text dispersion unit denom_units units_analyzed anticipated_post"
                 " calculate_pct"),
    ("result_groups", "outcome_pos group_pos group_id title description role"),
    ("denoms", "outcome_pos class_pos denom_pos units"),
    ("denom_counts", "outcome_pos class_pos denom_pos count_pos group_id value_text value"),
    ("classes", "outcome_pos class_pos title"),
    ("categories", "outcome_pos class_pos category_pos title"),
    ("measurements", "outcome_pos class_pos category_pos measurement_pos group_id value_text value"
                     " spread_text spread lower_text lower upper_text upper comment"),
    ("analyses", "outcome_pos analysis_pos group_description param_type param_value_text param_value"
                 " dispersion_type dispersion_value_text dispersion_value ci_pct_text ci_pct ci_sides"
                 " ci_lower_text ci_lower ci_upper_text ci_upper p_text p_op p_value method"
                 " statistical_comment estimate_comment non_inferiority_type ci_lower_comment"
                 " ci_upper_comment p_comment tested_non_inferiority non_inferiority_comment other_description"),
    ("analysis_groups", "outcome_pos analysis_pos pos group_id"),
]
TRIAL_COLUMNS = TABLES[0][1].split()
LAST_UPDATE = 1 + TRIAL_COLUMNS.index("last_update_posted")  # positions in a trials row tuple
VERSION_HOLDER = 1 + TRIAL_COLUMNS.index("version_holder")
INSERT = {name: "INSERT INTO %s (trial_id, %s) VALUES (%s)" % (name, ", ".join(cols.split()),
                                                               ", ".join("?" * (len(cols.split()) + 1)))
          for name, cols in TABLES}

DISPERSION_CODES = {"NA", "STANDARD_DEVIATION", "STANDARD_ERROR", "INTER_QUARTILE_RANGE", "FULL_RANGE",
                    "CONFIDENCE_80", "CONFIDENCE_90", "CONFIDENCE_95", "CONFIDENCE_975", "CONFIDENCE_99",
                    "CONFIDENCE_OTHER", "GEOMETRIC_COEFFICIENT"}
DISPERSION_TEXTS = {
    "standard deviation": "STANDARD_DEVIATION", "standard error": "STANDARD_ERROR",
    "standard error of mean": "STANDARD_ERROR", "standard error of the mean": "STANDARD_ERROR",
    "inter quartile range": "INTER_QUARTILE_RANGE", "interquartile range": "INTER_QUARTILE_RANGE",
    "full range": "FULL_RANGE", "80% confidence interval": "CONFIDENCE_80",
    "90% confidence interval": "CONFIDENCE_90", "95% confidence interval": "CONFIDENCE_95",
    "97.5% confidence interval": "CONFIDENCE_975", "99% confidence interval": "CONFIDENCE_99",
    "other confidence interval level": "CONFIDENCE_OTHER",
    "geometric coefficient of variation": "GEOMETRIC_COEFFICIENT", "not applicable": "NA",
}
P_OPS = [("<=", "<="), (">=", ">="), ("\u2264", "<="), ("\u2265", ">="), ("=<", "<="), ("=>", ">="),
         ("<", "<"), (">", ">"), ("=", "=")]
NUMBER_CHARS = set("0123456789+-.eE")


def now():
    return time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime())


def text(v):
    """A registry value as NOT NULL text: null is '', scalars their JSON text."""
    if v is None:
        return ""
    if v is True:
        return "true"
    if v is False:
        return "false"
    return v if isinstance(v, str) else str(v)


def texts(v):
    """A list of texts; a lone string counts as a list of one."""
    if v is None:
        return []
    if isinstance(v, str):
        return [v]
    return [text(x) for x in v]


def num(v):
    """(text, REAL or None): the value only when the text is a plain finite number."""
    s = text(v)
    t = s.strip()
    if not t or not set(t) <= NUMBER_CHARS:
        return s, None
    try:
        x = float(t)
    except ValueError:
        return s, None
    return s, (x if x - x == 0 else None)


def flag(v):
    """A JSON boolean (or "true"/"false") as 1/0, None when absent."""
    return {"true": 1, "false": 0}.get(text(v))


def enrollment(v):
    try:
        return int(float(text(v).strip())) if v is not None else None
    except ValueError:
        return None


def dispersion(s):
    t = s.strip()
    if t == "" or t in DISPERSION_CODES:
        return t
    if t == "STANDARD_ERROR_OF_MEAN":
        return "STANDARD_ERROR"
    key = " ".join(t.lower().replace("-", " ").replace("_", " ").split()).replace(" %", "%")
    return DISPERSION_TEXTS.get(key, s)


def p_value(v):
    s = text(v)
    t = s.strip()
    if t[:1] in ("p", "P"):
        t = t[1:].strip()
    op = ""
    for prefix, name in P_OPS:
        if t.startswith(prefix):
            op, t = name, t[len(prefix):].strip()
            break
    x = num(t)[1]
    return s, op, (x if x is not None and 0 <= x <= 1 else None)


def valid_nct(s):
    return len(s) == 11 and s.startswith("NCT") and s[3:].isdigit() and s[3:].isascii()


def trial_rows(s, tid, content_hash, source):
    """The rows of one study, as {table: [tuple, ...]}, each tuple starting with tid."""
    rows = {name: [] for name, _ in TABLES}
    p = s.get("protocolSection") or {}
    ident = p.get("identificationModule") or {}
    status = p.get("statusModule") or {}
    design = p.get("designModule") or {}
    info = design.get("designInfo") or {}
    enroll = design.get("enrollmentInfo") or {}
    sponsors = p.get("sponsorCollaboratorsModule") or {}
    lead = sponsors.get("leadSponsor") or {}
    org = ident.get("organization") or {}
    derived = s.get("derivedSection") or {}
    dates = []
    for key in ("startDateStruct", "primaryCompletionDateStruct", "completionDateStruct",
                "studyFirstPostDateStruct", "resultsFirstPostDateStruct", "lastUpdatePostDateStruct"):
        d = status.get(key) or {}
        dates += [text(d.get("date")), text(d.get("type"))]
    rows["trials"].append((
        tid, "ctgov", text((ident.get("orgStudyIdInfo") or {}).get("id")), text(ident.get("briefTitle")),
        text(ident.get("officialTitle")), text(ident.get("acronym")), text(org.get("fullName")),
        text(org.get("class")), text(status.get("overallStatus")), text(status.get("lastKnownStatus")),
        text(status.get("whyStopped")), text(status.get("statusVerifiedDate")), text(design.get("studyType")),
        text(info.get("allocation")), text(info.get("interventionModel")), text(info.get("primaryPurpose")),
        text((info.get("maskingInfo") or {}).get("masking")), enrollment(enroll.get("count")),
        text(enroll.get("type")), text(lead.get("name")), text(lead.get("class")), *dates,
        text((derived.get("miscInfoModule") or {}).get("versionHolder")), flag(s.get("hasResults")), "",
        content_hash, *source, now()))

    for i, alias in enumerate(texts(ident.get("nctIdAliases"))):
        rows["trial_ids"].append((tid, "alias", i, alias, "", "", ""))
    for i, x in enumerate(ident.get("secondaryIdInfos") or []):
        rows["trial_ids"].append((tid, "secondary", i, text(x.get("id")), text(x.get("type")),
                                  text(x.get("domain")), text(x.get("link"))))
    for i, phase in enumerate(texts(design.get("phases"))):
        rows["trial_phases"].append((tid, i, phase))
    conditions = p.get("conditionsModule") or {}
    for kind, terms in (("condition", texts(conditions.get("conditions"))),
                        ("keyword", texts(conditions.get("keywords"))),
                        ("condition_term", meshes(derived.get("conditionBrowseModule"))),
                        ("intervention_term", meshes(derived.get("interventionBrowseModule")))):
        for i, term in enumerate(terms):
            rows["trial_terms"].append((tid, kind, i, term))
    for i, c in enumerate(sponsors.get("collaborators") or []):
        rows["trial_collaborators"].append((tid, i, text(c.get("name")), text(c.get("class"))))

    arms = p.get("armsInterventionsModule") or {}
    for i, a in enumerate(arms.get("armGroups") or []):
        rows["arms"].append((tid, i, text(a.get("label")), text(a.get("type")), text(a.get("description"))))
        for j, name in enumerate(texts(a.get("interventionNames"))):
            rows["arm_intervention_names"].append((tid, i, j, name))
    for i, iv in enumerate(arms.get("interventions") or []):
        rows["interventions"].append((tid, i, text(iv.get("type")), text(iv.get("name")),
                                      text(iv.get("description"))))
        for j, name in enumerate(texts(iv.get("armGroupLabels"))):
            rows["intervention_names"].append((tid, i, "arm_label", j, name))
        for j, name in enumerate(texts(iv.get("otherNames"))):
            rows["intervention_names"].append((tid, i, "other_name", j, name))

    # Registered outcomes keep the record's key order across the three lists.
    kinds = {"primaryOutcomes": "PRIMARY", "secondaryOutcomes": "SECONDARY", "otherOutcomes": "OTHER"}
    for key, items in (p.get("outcomesModule") or {}).items():
        if key in kinds:
            for o in items or []:
                rows["registered_outcomes"].append((tid, len(rows["registered_outcomes"]), kinds[key],
                                                    text(o.get("measure")), text(o.get("description")),
                                                    text(o.get("timeFrame"))))
    for i, r in enumerate((p.get("referencesModule") or {}).get("references") or []):
        rows["trial_references"].append((tid, i, text(r.get("pmid")), text(r.get("type")),
                                         text(r.get("citation"))))

    results = s.get("resultsSection") or {}
    measures = (results.get("outcomeMeasuresModule") or {}).get("outcomeMeasures") or []
    for i, o in enumerate(measures):
        outcome_rows(rows, tid, i, o)
    return rows


def meshes(module):
    return [text(m.get("term")) for m in (module or {}).get("meshes") or [] if "term" in m]


def outcome_rows(rows, tid, pos, o):
    disp = text(o.get("dispersionType"))
    rows["outcomes"].append((
        tid, pos, pos, text(o.get("type")), text(o.get("title")), text(o.get("description")),
        text(o.get("populationDescription")), text(o.get("timeFrame")), text(o.get("reportingStatus")),
        text(o.get("paramType")), disp, dispersion(disp), text(o.get("unitOfMeasure")),
        text(o.get("denomUnitsSelected")), text(o.get("typeUnitsAnalyzed")),
        text(o.get("anticipatedPostingDate")), flag(o.get("calculatePct"))))
    for i, g in enumerate(o.get("groups") or []):
        rows["result_groups"].append((tid, pos, i, text(g.get("id")), text(g.get("title")),
                                      text(g.get("description")), ""))
    denom_rows(rows, tid, pos, None, o.get("denoms"))
    for ci, c in enumerate(o.get("classes") or []):
        rows["classes"].append((tid, pos, ci, text(c.get("title"))))
        denom_rows(rows, tid, pos, ci, c.get("denoms"))
        for gi, g in enumerate(c.get("categories") or []):
            rows["categories"].append((tid, pos, ci, gi, text(g.get("title"))))
            for mi, m in enumerate(g.get("measurements") or []):
                rows["measurements"].append((tid, pos, ci, gi, mi, text(m.get("groupId")),
                                             *num(m.get("value")), *num(m.get("spread")),
                                             *num(m.get("lowerLimit")), *num(m.get("upperLimit")),
                                             text(m.get("comment"))))
    for ai, a in enumerate(o.get("analyses") or []):
        rows["analyses"].append((
            tid, pos, ai, text(a.get("groupDescription")), text(a.get("paramType")), *num(a.get("paramValue")),
            text(a.get("dispersionType")), *num(a.get("dispersionValue")), *num(a.get("ciPctValue")),
            text(a.get("ciNumSides")), *num(a.get("ciLowerLimit")), *num(a.get("ciUpperLimit")),
            *p_value(a.get("pValue")), text(a.get("statisticalMethod")), text(a.get("statisticalComment")),
            text(a.get("estimateComment")), text(a.get("nonInferiorityType")),
            text(a.get("ciLowerLimitComment")), text(a.get("ciUpperLimitComment")), text(a.get("pValueComment")),
            flag(a.get("testedNonInferiority")), text(a.get("nonInferiorityComment")),
            text(a.get("otherAnalysisDescription"))))
        for gi, g in enumerate(texts(a.get("groupIds"))):
            rows["analysis_groups"].append((tid, pos, ai, gi, g))


def denom_rows(rows, tid, pos, class_pos, denoms):
    for di, d in enumerate(denoms or []):
        rows["denoms"].append((tid, pos, class_pos, di, text(d.get("units"))))
        for ki, c in enumerate(d.get("counts") or []):
            rows["denom_counts"].append((tid, pos, class_pos, di, ki, text(c.get("groupId")), *num(c.get("value"))))


def registry_file(name):
    n = name.lower()
    if n.endswith(".gz"):
        n = n[:-3]
    return not name.startswith(".") and n.endswith((".json", ".jsonl", ".ndjson", ".zip"))


def studies(path):
    """Yield (file, format, position, raw bytes or None, study or None) for
    each record under path; study None means the record, or the whole file,
    could not be read."""
    if os.path.isdir(path):
        for name in sorted(os.listdir(path)):
            full = os.path.join(path, name)
            if os.path.isdir(full) or registry_file(name):
                yield from studies(full)
        return
    with open(path, "rb") as f:
        data = f.read(4)
        fmt, name, archive = "", path.lower(), path
        if data[:2] == b"\x1f\x8b":
            fmt, name = "gzip+", name[:-3] if name.endswith(".gz") else name
            f.seek(0)
            data = gzip.decompress(f.read())
            archive = io.BytesIO(data)
        elif data != b"PK\x03\x04" and not name.endswith(".zip"):
            data += f.read()
    if data[:4] == b"PK\x03\x04" or name.endswith(".zip"):
        try:
            z = zipfile.ZipFile(archive)
        except zipfile.BadZipFile:
            yield path, fmt + "zip", "", None, None
            return
        with z:
            for entry in z.namelist():
                base = entry.rsplit("/", 1)[-1]
                if len(base) == 16 and base.endswith(".json") and valid_nct(base[:11]):
                    raw = z.read(entry)
                    yield path, fmt + "zip", "entry " + entry, raw, parse(raw)
        return
    if name.endswith((".jsonl", ".ndjson")):
        for n, line in enumerate(data.split(b"\n"), 1):
            if line.strip():
                yield path, fmt + "jsonl", "line %d" % n, line, parse(line)
        return
    doc = parse(data)
    if isinstance(doc, dict) and isinstance(doc.get("studies"), list):
        for i, s in enumerate(doc["studies"]):
            yield path, fmt + "page", "studies[%d]" % i, None, s
    elif isinstance(doc, list):
        for i, s in enumerate(doc):
            yield path, fmt + "json", "[%d]" % i, None, s
    else:
        yield path, fmt + "json", "", data, doc


def parse(raw):
    try:
        return json.loads(raw)
    except ValueError:
        return None


def file_sha256(path):
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for chunk in iter(lambda: f.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def older(a, b):
    """Compare two registry dates on their common precision; '' is equal to anything."""
    if not a or not b:
        return 0
    n = min(len(a), len(b))
    return (a[:n] > b[:n]) - (a[:n] < b[:n])


def main():
    db, path = sys.argv[1], sys.argv[2]
    migrations = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "store", "migrations")
    con = sqlite3.connect(db, isolation_level=None)
    current_version = con.execute("PRAGMA user_version").fetchone()[0]
    names = sorted(n for n in os.listdir(migrations) if n.endswith(".sql"))
    for version, name in enumerate(names, 1):
        if version <= current_version:
            continue  # an existing database: applied already
        with open(os.path.join(migrations, name)) as f:
            con.executescript("BEGIN;\n%s\nPRAGMA user_version = %d;\nCOMMIT;" % (f.read(), version))
    con.execute("PRAGMA journal_mode=WAL")
    con.execute("PRAGMA synchronous=NORMAL")

    records = rows = pending = 0
    started = now()
    current = None  # [file, sha256, format, records, rejected, trial ids seen]

    def finish(cur):
        nonlocal rows
        if cur and cur[3] > 0 and cur[4] == 0:
            con.execute("INSERT OR REPLACE INTO source_files VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
                        (cur[1], cur[0], os.path.getsize(cur[0]), cur[2], cur[3], 0, started, now()))
            rows += 1

    con.execute("BEGIN")
    for file, fmt, pos, raw, s in studies(path):
        if current is None or current[0] != file:
            finish(current)
            current = [file, file_sha256(file), fmt, 0, 0, set()]
        p = s.get("protocolSection") if isinstance(s, dict) else None
        tid = text((p.get("identificationModule") or {}).get("nctId")).strip() if isinstance(p, dict) else ""
        if not valid_nct(tid) or tid in current[5]:
            current[4] += 1
            continue
        current[5].add(tid)
        if raw is None:
            raw = json.dumps(s, ensure_ascii=False, separators=(",", ":")).encode()
        content_hash = hashlib.sha256(raw).hexdigest()
        try:
            new = trial_rows(s, tid, content_hash, (file, current[1], pos))
        except (AttributeError, TypeError, ValueError):
            current[4] += 1  # a value of the wrong JSON type
            continue
        current[3] += 1
        records += 1
        old = con.execute("SELECT content_hash, last_update_posted, version_holder FROM trials WHERE trial_id = ?",
                          (tid,)).fetchone()
        t = new["trials"][0]
        write = True
        if old is not None:
            if old[0] == content_hash:
                write = False
            else:
                c = older(t[LAST_UPDATE], old[1]) or older(t[VERSION_HOLDER], old[2])
                write = c >= 0
                if write:
                    for name, _ in reversed(TABLES):
                        con.execute("DELETE FROM %s WHERE trial_id = ?" % name, (tid,))
        if write:
            for name, _ in TABLES:
                if new[name]:
                    con.executemany(INSERT[name], new[name])
                    rows += len(new[name])
        pending += 1
        if pending >= BATCH:
            con.execute("COMMIT")
            con.execute("BEGIN")
            pending = 0
    finish(current)
    con.execute("COMMIT")
    con.close()
    print("records %d rows %d" % (records, rows))


if __name__ == "__main__":
    main()
