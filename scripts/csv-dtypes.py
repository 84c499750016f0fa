#!/usr/bin/env python3
"""How pandas reads polysift's CSV tables with read_csv's defaults, for test/tables-csv.test.ts: per file, each
column's dtype and whether pandas sees it as numeric (pandas.api.types.is_numeric_dtype).

Usage: python3 scripts/csv-dtypes.py FILE... > out.json
Prints {file: {"columns": [...], "dtypes": {column: dtype}, "numeric": {column: bool}, "rows": n}}.
"""
import json
import sys

import pandas as pd


def main():
    out = {}
    for path in sys.argv[1:]:
        df = pd.read_csv(path)
        out[path] = {
            'columns': list(df.columns),
            'dtypes': {c: str(t) for c, t in df.dtypes.items()},
            'numeric': {c: bool(pd.api.types.is_numeric_dtype(t)) for c, t in df.dtypes.items()},
            'rows': int(len(df)),
        }
    json.dump(out, sys.stdout)


if __name__ == '__main__':
    main()
