#!/usr/bin/python3
"""Drive LibreOffice Calc through UNO for the spreadsheet tests.

Run with Debian's own interpreter (/usr/bin/python3), which has the UNO
bindings of the python3-uno package. soffice must already listen on
--port (the Go test starts it with a fresh user profile).

Modes:
  calc.py --port N set CELLS.json
      Open a fresh sheet, set every cell of CELLS.json (a list of
      {"cell": "B3", "formula": "=..."} or {"cell": "A1", "string": "..."}
      or {"cell": "A2", "value": 1.5}), recalculate, and print a JSON list
      of {"cell", "formula", "string", "value", "type", "error"}.
  calc.py --port N dump FILE.ods
      Load a workbook (its web formulas are not evaluated: a loaded file's
      external content is blocked in headless mode) and print every
      non-empty cell of every sheet as {"sheet", "cell", "formula",
      "string", "value", "type"}.

Formulas set through UNO use ";" between arguments.
"""

import json
import sys
import time

import uno
from com.sun.star.beans import PropertyValue


def prop(name, value):
    p = PropertyValue()
    p.Name, p.Value = name, value
    return p


def connect(port, timeout=90.0):
    local = uno.getComponentContext()
    resolver = local.ServiceManager.createInstanceWithContext(
        "com.sun.star.bridge.UnoUrlResolver", local)
    url = "uno:socket,host=127.0.0.1,port=%d;urp;StarOffice.ComponentContext" % port
    deadline = time.time() + timeout
    while True:
        try:
            ctx = resolver.resolve(url)
            break
        except Exception:  # NoConnectException until soffice listens
            if time.time() > deadline:
                raise
            time.sleep(0.25)
    smgr = ctx.ServiceManager
    return smgr.createInstanceWithContext("com.sun.star.frame.Desktop", ctx)


CELL_TYPES = {"EMPTY": "empty", "VALUE": "value", "TEXT": "text", "FORMULA": "formula"}


def describe(cell):
    t = CELL_TYPES.get(cell.getType().value, cell.getType().value)
    out = {
        "formula": cell.getFormula(),
        "string": cell.getString(),
        "value": cell.getValue(),
        "type": t,
        "error": cell.getError(),
    }
    if t == "formula":
        # FormulaResultType2: com.sun.star.sheet.FormulaResult VALUE=1, STRING=2, ERROR=4
        out["result_type"] = int(cell.FormulaResultType2)
    return out


def set_cells(desktop, cells):
    doc = desktop.loadComponentFromURL("private:factory/scalc", "_blank", 0, (prop("Hidden", True),))
    try:
        sheet = doc.getSheets().getByIndex(0)
        for c in cells:
            cell = sheet.getCellRangeByName(c["cell"])
            if "formula" in c:
                cell.setFormula(c["formula"])
            elif "string" in c:
                cell.setString(c["string"])
            else:
                cell.setValue(float(c["value"]))
        doc.calculateAll()
        out = []
        for c in cells:
            d = describe(sheet.getCellRangeByName(c["cell"]))
            d["cell"] = c["cell"]
            out.append(d)
        return out
    finally:
        doc.close(True)


def dump(desktop, path):
    url = uno.systemPathToFileUrl(path)
    doc = desktop.loadComponentFromURL(url, "_blank", 0, (prop("Hidden", True),))
    try:
        out = []
        sheets = doc.getSheets()
        for i in range(sheets.getCount()):
            sheet = sheets.getByIndex(i)
            cur = sheet.createCursor()
            cur.gotoEndOfUsedArea(False)
            addr = cur.getRangeAddress()
            for row in range(addr.EndRow + 1):
                for col in range(addr.EndColumn + 1):
                    cell = sheet.getCellByPosition(col, row)
                    if cell.getType().value == "EMPTY":
                        continue
                    d = describe(cell)
                    d["sheet"] = sheet.getName()
                    d["cell"] = cell.AbsoluteName.split(".")[-1].replace("$", "")
                    out.append(d)
        return out
    finally:
        doc.close(True)


def main(argv):
    if len(argv) != 5 or argv[1] != "--port" or argv[3] not in ("set", "dump"):
        sys.stderr.write(__doc__)
        return 2
    desktop = connect(int(argv[2]))
    if argv[3] == "set":
        with open(argv[4]) as f:
            cells = json.load(f)
        out = set_cells(desktop, cells)
    else:
        out = dump(desktop, argv[4])
    # repr of a float is the shortest text that reads back to the same
    # double, so the Go side recovers the exact value LibreOffice holds.
    json.dump(out, sys.stdout)
    sys.stdout.write("\n")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
