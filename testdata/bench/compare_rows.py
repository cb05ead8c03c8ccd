#!/usr/bin/python3
"""Print the row count of every table in two SQLite databases side by
side; exit 1 when any count differs (or a table is in one only).

    compare_rows.py DB_A DB_B
"""
import sqlite3
import sys


def counts(path):
    con = sqlite3.connect("file:%s?mode=ro" % path, uri=True)
    names = [r[0] for r in con.execute(
        "SELECT name FROM sqlite_schema WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name")]
    out = {name: con.execute('SELECT count(*) FROM "%s"' % name).fetchone()[0] for name in names}
    con.close()
    return out


def main():
    if len(sys.argv) != 3:
        sys.exit("usage: compare_rows.py DB_A DB_B")
    a, b = counts(sys.argv[1]), counts(sys.argv[2])
    width = max(len(n) for n in list(a) + list(b) + ["table"])
    print("%-*s %12s %12s" % (width, "table", "A", "B"))
    differ = 0
    for name in sorted(set(a) | set(b)):
        x, y = a.get(name, "-"), b.get(name, "-")
        mark = "" if x == y else "  DIFFERENT"
        differ += x != y
        print("%-*s %12s %12s%s" % (width, name, x, y, mark))
    print("A = %s, B = %s: %s" % (sys.argv[1], sys.argv[2],
                                  "all counts equal" if not differ else "%d table(s) differ" % differ))
    sys.exit(1 if differ else 0)


if __name__ == "__main__":
    main()
