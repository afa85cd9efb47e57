"""Runs SQL statements through Python's sqlite3 module with the trendsql
extension loaded and prints the results as JSON, for ext_test.go.

usage: host.py EXTENSION DATABASE < statements.json
statements.json: a JSON list of SQL texts. Output: a JSON list with, per
statement, {"columns": [...], "rows": [[...], ...]} or {"error": "..."}.
Floats are written by json.dumps (shortest repr, round-trips exactly); BLOBs
as {"blob": hex}.
"""
import json
import sqlite3
import sys


def value(v):
    if isinstance(v, bytes):
        return {"blob": v.hex()}
    return v


def main():
    ext, db = sys.argv[1], sys.argv[2]
    statements = json.load(sys.stdin)
    uri = db if db == ":memory:" else "file:" + db + "?mode=ro"
    conn = sqlite3.connect(uri, uri=db != ":memory:")
    conn.enable_load_extension(True)
    conn.load_extension(ext)
    conn.enable_load_extension(False)
    out = []
    for sql in statements:
        try:
            cur = conn.execute(sql)
            rows = [[value(v) for v in r] for r in cur.fetchall()]
            cols = [d[0] for d in cur.description] if cur.description else []
            out.append({"columns": cols, "rows": rows})
        except sqlite3.Error as e:
            out.append({"error": str(e)})
    json.dump(out, sys.stdout)


if __name__ == "__main__":
    main()
