#!/usr/bin/python3
"""Plain loader for comparison: the standard library's json and sqlite3,
one row per trial and one per measurement, one transaction. Reads the
same corpus layouts as synthcorpus writes (folder of .json files, search
pages, JSON lines, bulk zip).

    plain_ingest.py DB PATH
"""
import json
import os
import sqlite3
import sys
import zipfile


def studies(path):
    if os.path.isdir(path):
        for root, dirs, files in os.walk(path):
            dirs.sort()
            for name in sorted(files):
                yield from studies(os.path.join(root, name))
        return
    if path.endswith(".zip"):
        with zipfile.ZipFile(path) as z:
            for name in z.namelist():
                if name.endswith(".json"):
                    yield json.loads(z.read(name))
        return
    if path.endswith(".jsonl"):
        with open(path, "rb") as f:
            for line in f:
                if line.strip():
                    yield json.loads(line)
        return
    with open(path, "rb") as f:
        doc = json.load(f)
    if isinstance(doc, dict) and "studies" in doc:
        yield from doc["studies"]
    else:
        yield doc


def main():
    db, path = sys.argv[1], sys.argv[2]
    con = sqlite3.connect(db)
    con.execute("PRAGMA journal_mode=WAL")
    con.execute("PRAGMA synchronous=NORMAL")
    con.execute("CREATE TABLE IF NOT EXISTS trials (trial_id TEXT PRIMARY KEY, title TEXT, status TEXT, has_results INTEGER)")
    con.execute("""CREATE TABLE IF NOT EXISTS measurements (trial_id TEXT, outcome_pos INTEGER, class_pos INTEGER,
        category_pos INTEGER, measurement_pos INTEGER, group_id TEXT, value_text TEXT, value REAL,
        spread_text TEXT, spread REAL, PRIMARY KEY (trial_id, outcome_pos, class_pos, category_pos, measurement_pos))""")
    records = rows = 0

    def num(s):
        try:
            return float(s)
        except (TypeError, ValueError):
            return None

    with con:
        for s in studies(path):
            p = s.get("protocolSection", {})
            ident = p.get("identificationModule", {})
            tid = ident.get("nctId")
            con.execute("INSERT OR REPLACE INTO trials VALUES (?, ?, ?, ?)",
                        (tid, ident.get("briefTitle"), p.get("statusModule", {}).get("overallStatus"), int(bool(s.get("hasResults")))))
            con.execute("DELETE FROM measurements WHERE trial_id = ?", (tid,))
            records += 1
            rows += 1
            oms = s.get("resultsSection", {}).get("outcomeMeasuresModule", {}).get("outcomeMeasures", [])
            for oi, o in enumerate(oms):
                for ci, c in enumerate(o.get("classes", [])):
                    for gi, g in enumerate(c.get("categories", [])):
                        for mi, m in enumerate(g.get("measurements", [])):
                            con.execute("INSERT INTO measurements VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                                        (tid, oi, ci, gi, mi, m.get("groupId"), m.get("value"), num(m.get("value")),
                                         m.get("spread"), num(m.get("spread"))))
                            rows += 1
    con.close()
    print("records %d rows %d" % (records, rows))


if __name__ == "__main__":
    main()
