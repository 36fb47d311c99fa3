"""Read the plan's workbook back with openpyxl (a general-purpose spreadsheet library) and hold
it to the CSV files of the same run.

`plan --out DIR --xlsx DIR/plan.xlsx` on the demo, then for each sheet with a table: a filter on
its heading row and the heading frozen; money cells typed as numbers equal to the CSV's to the
cent; the "Total" row's SUBTOTAL formula over the money column and, in the value the workbook
stores for it (read with openpyxl's data_only), the CSV column's sum to the cent; and the
Programme sheet equal to programme.csv, cell for cell.

Usage: python3 check_workbook.py PATH/TO/pavestrat WORKDIR
Prints what it checked and closes with "N passed, M failed"; exits 1 on any failure.
"""

import csv
import os
import subprocess
import sys
from decimal import Decimal

import openpyxl


def cents(text):
    return int((Decimal(text) * 100).to_integral_value())


def main():
    exe, work = sys.argv[1], sys.argv[2]
    os.makedirs(work, exist_ok=True)
    out = os.path.join(work, "plan")
    book = os.path.join(work, "plan.xlsx")
    r = subprocess.run([exe, "-q", "plan", "--out", out, "--xlsx", book], capture_output=True, text=True)
    if r.returncode != 0:
        sys.exit(f"plan failed ({r.returncode}):\n{r.stderr}")
    passed, failed = 0, 0

    def check(ok, what):
        nonlocal passed, failed
        if ok:
            passed += 1
        else:
            failed += 1
            print("FAIL:", what)

    def rows(name):
        with open(os.path.join(out, name), newline="") as f:
            return list(csv.DictReader(f))

    formulas = openpyxl.load_workbook(book)
    values = openpyxl.load_workbook(book, data_only=True)
    for sheet, csv_name, money_col, key in [
        ("Work programme", "work_programme.csv", "cost", "Cost"),
        ("Section plan", "section_plan.csv", "npv", "NPV"),
        ("Budget use", "budget_use.csv", "used", "Used"),
    ]:
        ws, wv = formulas[sheet], values[sheet]
        check(ws.auto_filter.ref is not None and ws.auto_filter.ref.startswith("A1:"), f"{sheet}: filter")
        check(ws.freeze_panes == "A2", f"{sheet}: heading frozen ({ws.freeze_panes})")
        head = [c.value for c in ws[1]]
        col = head.index(key)
        data = rows(csv_name)
        body = list(wv.iter_rows(min_row=2, values_only=True))
        total_row = body[-1]
        body = body[:-1]
        check(len(body) == len(data), f"{sheet}: {len(body)} rows against {len(data)}")
        typed = all(isinstance(b[col], (int, float)) for b in body)
        check(typed, f"{sheet}: {key} cells are numbers")
        same = all(round(b[col] * 100) == cents(d[money_col]) for b, d in zip(body, data))
        check(same, f"{sheet}: {key} equals {csv_name}'s {money_col} to the cent")
        check(total_row[0] == "Total", f"{sheet}: a Total row")
        formula = ws.cell(row=len(body) + 2, column=col + 1).value
        check(isinstance(formula, str) and formula.startswith("=SUBTOTAL(109,"), f"{sheet}: total is a SUBTOTAL ({formula})")
        want = sum(cents(d[money_col]) for d in data)
        check(round(total_row[col] * 100) == want, f"{sheet}: stored total {total_row[col]} against the CSV sum {want / 100}")
        print(f"{sheet}: {len(body)} rows, total {total_row[col]:,.2f}")

    prog = rows("programme.csv")
    wv = values["Programme"]
    head = [c.value for c in wv[1]]
    body = list(wv.iter_rows(min_row=2, values_only=True))
    check(len(body) == len(prog), f"Programme: {len(body)} rows against {len(prog)}")
    cost_cols = [k for k in prog[0] if k == "cost" or k.startswith("cost_")]
    ok = True
    for b, p in zip(body, prog):
        for k in cost_cols:
            cell = b[list(prog[0]).index(k)]
            if p[k] == "":
                ok &= cell is None
            else:
                ok &= isinstance(cell, (int, float)) and round(cell * 100) == cents(p[k])
        ok &= (b[0] or "") == p["kind"] and (b[2] or "") == p["section_id"]
    check(ok, "Programme: every cost cell equals programme.csv to the cent")
    check(head[0] == "Row" and head[8] == "Cost", f"Programme: readable headings {head[:9]}")
    print(f"Programme: {len(body)} rows, {len(cost_cols)} money columns")
    print(f"{passed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
