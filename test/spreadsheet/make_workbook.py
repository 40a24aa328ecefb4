#!/usr/bin/python3
"""Write docs/demo-workbook.ods, the demo workbook of docs/spreadsheets.md.

DEMO DATA: a warehouse slab and its facade, invented for illustration.

Run with Debian's /usr/bin/python3 (python3-uno) against a LibreOffice
started as in calc.py, e.g.

    soffice --headless --invisible --norestore \
        "--accept=socket,host=127.0.0.1,port=2002;urp;" \
        -env:UserInstallation=file:///tmp/lo-profile &
    /usr/bin/python3 test/spreadsheet/make_workbook.py --port 2002 docs/demo-workbook.ods

Every web cell builds its request from the service address in B3 (and
the API key in B4), so pointing the workbook at another server is one
cell. test/spreadsheet/libreoffice_test.go reads the formulas back from
the file and checks each value against the service's JSON answer.
"""

import os
import sys

import uno

from calc import connect, prop

TITLE = ("Thermal movement service: demo workbook. DEMO DATA: a warehouse slab and its "
         "facade, invented for illustration; not a design.")

# Item, calculation, parameters (a query string; spaces allowed), result,
# unit (for text rows), and how the answer is read: "text" (format=text,
# one bare number, or pass/fail for a check_<name> result) or "xml"
# (format=xml read by FILTERXML).
ITEMS = [
    ("Slab bay, winter contraction (30 m, cast at 15 degC, -10 degC)", "expansion/linear",
     "length=30 m&material=concrete&t_initial=15 degC&t_final=-10 degC", "delta_length", "mm", "text"),
    ("Slab bay, summer expansion in inches (to 45 degC)", "expansion/linear",
     "length=30 m&material=concrete&t_initial=15 degC&t_final=45 degC", "delta_length", "in", "text"),
    ("Slab joint: gap to set at 15 degC for a 5 mm gap at 45 degC", "joints/gap",
     "length=30 m&material=concrete&t_min=-10 degC&t_max=45 degC&t_install=15 degC&min_gap=5 mm",
     "gap_install", "mm", "text"),
    ("Slab joint: widest gap, at -10 degC", "joints/gap",
     "length=30 m&material=concrete&t_min=-10 degC&t_max=45 degC&t_install=15 degC&min_gap=5 mm",
     "gap_at_t_min", "", "xml"),
    ("Slab joint sealed with a 25 % movement-capability sealant: width to build", "joints/gap",
     "length=30 m&material=concrete&t_min=-10 degC&t_max=45 degC&t_install=15 degC&movement_capability=25",
     "gap_install", "mm", "text"),
    ("That sealant in the width built: compression at 45 degC within capability (pass/fail)", "joints/gap",
     "length=30 m&material=concrete&t_min=-10 degC&t_max=45 degC&t_install=15 degC&movement_capability=25",
     "check_sealant_compression", "", "text"),
    ("That sealant in a 14 mm joint: compression at 45 degC within capability (pass/fail)", "joints/gap",
     "length=30 m&material=concrete&t_min=-10 degC&t_max=45 degC&t_install=15 degC&gap_install=14 mm"
     "&movement_capability=25", "check_sealant_compression", "", "text"),
    ("Slab, 200 mm thick: largest contraction-joint spacing", "joints/spacing",
     "thickness=200 mm", "spacing_max", "m", "text"),
    ("Facade panel 2.4 m x 1.2 m aluminium, 20 to 70 degC: length", "expansion/area",
     "length=2.4 m&width=1.2 m&material=aluminium-6061&t_initial=20 degC&t_final=70 degC",
     "final_length", "", "xml"),
    ("Facade panel: width (same answer)", "expansion/area",
     "length=2.4 m&width=1.2 m&material=aluminium-6061&t_initial=20 degC&t_final=70 degC",
     "final_width", "", "xml"),
    ("Facade panel: area growth", "expansion/area",
     "length=2.4 m&width=1.2 m&material=aluminium-6061&t_initial=20 degC&t_final=70 degC",
     "delta_area", "mm2", "text"),
    ("Facade panel on a steel rail: slip at the fixings over 50 K", "differential",
     "length=2.4 m&material_a=aluminium-6061&material_b=structural-steel&delta_t=50 K",
     "differential_movement", "mm", "text"),
    ("Steel rail held at both ends, 30 K warmer: stress", "restraint",
     "material=structural-steel&delta_t=30 K&area=1200 mm2", "stress", "MPa", "text"),
    ("Sprinkler tank, 40 m3 water in steel, 5 to 30 degC: overflow", "expansion/volume",
     "volume=40 m3&material=water&vessel_material=structural-steel&t_initial=5 degC&t_final=30 degC",
     "net_overflow", "L", "text"),
]

FIRST_ROW = 7  # 1-based row of the first item


def key_part():
    return 'IF($B$4="";"";"&api_key="&ENCODEURL($B$4))'


def cells():
    out = [
        ("A1", "string", TITLE),
        ("A3", "string", "Service address"),
        ("B3", "string", "http://localhost:8080"),
        ("A4", "string", "API key (leave empty if the service needs none)"),
        ("B4", "string", ""),
        ("A6", "string", "Item"),
        ("B6", "string", "Calculation"),
        ("C6", "string", "Parameters"),
        ("D6", "string", "Result"),
        ("E6", "string", "Unit"),
        ("F6", "string", "Value"),
        ("G6", "string", "Answer of the service"),
        ("H6", "string", "Request"),
    ]
    for i, (item, calc, params, result, unit, form) in enumerate(ITEMS):
        r = FIRST_ROW + i
        out += [
            ("A%d" % r, "string", item),
            ("B%d" % r, "string", calc),
            ("C%d" % r, "string", params),
            ("D%d" % r, "string", result),
        ]
        base = '$B$3&"/v1/"&B{r}&"?"&SUBSTITUTE(C{r};" ";"%20")'.format(r=r)
        if form == "text":
            out.append(("E%d" % r, "string", unit))
            url = ('={base}&"&format=text&on_error=inline&result="&D{r}'
                   '&IF(E{r}="";"";"&"&D{r}&"_unit="&ENCODEURL(E{r}))&{key}').format(base=base, r=r, key=key_part())
            out += [
                ("H%d" % r, "formula", url),
                ("G%d" % r, "formula", "=WEBSERVICE(H%d)" % r),
                ("F%d" % r, "formula", '=IFERROR(NUMBERVALUE(G{r};".");G{r})'.format(r=r)),
            ]
        else:
            url = '={base}&"&format=xml&on_error=inline"&{key}'.format(base=base, key=key_part())
            out += [
                ("H%d" % r, "formula", url),
                ("G%d" % r, "formula", "=WEBSERVICE(H%d)" % r),
                ("E%d" % r, "formula", '=IFERROR(FILTERXML(G{r};"//"&D{r}&"/@unit");"")'.format(r=r)),
                ("F%d" % r, "formula", '=IFERROR(NUMBERVALUE(FILTERXML(G{r};"//"&D{r});".");G{r})'.format(r=r)),
            ]
    r = FIRST_ROW + len(ITEMS) + 1
    out += [
        ("A%d" % r, "string", "Numbers come back with '.' as the decimal separator; NUMBERVALUE(x; \".\") "
                              "reads them in any locale. An error shows as #ERROR: and the reason (on_error=inline)."),
        ("A%d" % (r + 1), "string", "Preliminary engineering calculation: check it before relying on it. "
                                    "A licensed engineer checks the design before anything is built."),
    ]
    return out


def main(argv):
    if len(argv) != 4 or argv[1] != "--port":
        sys.stderr.write(__doc__)
        return 2
    desktop = connect(int(argv[2]))
    doc = desktop.loadComponentFromURL("private:factory/scalc", "_blank", 0, (prop("Hidden", True),))
    try:
        sheet = doc.getSheets().getByIndex(0)
        sheet.setName("Warehouse (demo data)")
        for addr, kind, text in cells():
            cell = sheet.getCellRangeByName(addr)
            if kind == "formula":
                cell.setFormula(text)
            else:
                cell.setString(text)
        cols = sheet.getColumns()
        for i, width in enumerate([9000, 3200, 9000, 4200, 1800, 3200, 4000, 12000]):
            cols.getByIndex(i).Width = width  # 1/100 mm
        sheet.getCellRangeByName("A6:H6").CharWeight = 150.0  # bold
        path = os.path.abspath(argv[3])
        doc.storeToURL(uno.systemPathToFileUrl(path), (prop("FilterName", "calc8"),))
    finally:
        doc.close(True)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
