import csv, sys
rows = list(csv.reader(open(sys.argv[1], newline=''), strict=True))
print(len(rows[0]), sorted({len(r) for r in rows}), rows[1][0])
