"""Write the small bad-input (and one good) logs used by tests/cli/check.rs.

Run from this folder: python3 make_files.py. The files are committed; the tests never run this.
Each log is a lightly damped swing (period 1.6 s, 50 Hz) so that only the defect under test is
wrong with it. The line number of each defect is fixed here and asserted in the tests.
"""
import math

def swing(n=250, dt=0.02, amp=10.0, eq=2.0, period=1.6, decay=0.05):
    w = 2 * math.pi / period
    return [(i * dt, eq + amp * math.exp(-decay * i * dt) * math.cos(w * i * dt)) for i in range(n)]

def write(name, header, rows, comment=None):
    with open(name, "w", newline="\n") as f:
        if comment:
            f.write(f"# {comment}\n")
        f.write(header + "\n")
        for r in rows:
            f.write(r + "\n")

rows = [f"{t:.3f},{a:.5f}" for t, a in swing()]
# Good: comment line 1, header line 2, data lines 3..252.
write("good_deg.csv", "time_s,angle_deg", rows, "invented rig: test swing, degrees and seconds")
# NaN angle on lines 10 and 40 (data row i is on line i + 3).
nan = list(rows); nan[7] = "0.140,NaN"; nan[37] = "0.740,nan"
write("nan_rows.csv", "time_s,angle_deg", nan, "two rows lost their angle")
# Time going backwards on line 30.
back = list(rows); back[27] = "0.500," + rows[27].split(",")[1]
write("time_backwards.csv", "time_s,angle_deg", back, "clock jumped back")
# Missing angle column.
write("missing_column.csv", "time_s,voltage", rows)
# Empty file.
open("empty.csv", "w").close()
# Five rows only (header line 1, data lines 2..6).
write("five_rows.csv", "time_s,angle_deg", rows[:5])
# Two angle columns.
write("ambiguous.csv", "time_s,angle_deg,theta", [r + ",0.0" for r in rows])
# A delimiter the loader does not know.
write("bad_delimiter.csv", "time_s|angle_deg", [r.replace(",", "|") for r in rows])
# Encoder counts with no counts per revolution given.
write("counts.csv", "t_ms,counts", [f"{t*1000:.0f},{round(a/360*10000)}" for t, a in swing()])
# Header, comments, no data.
write("no_data.csv", "time_s,angle_deg", ["# nothing logged"], "rig stopped before logging")
# Unparseable time on line 21.
txt = list(rows); txt[19] = "00:00:38," + rows[19].split(",")[1]
write("bad_number.csv", "time_s,angle_deg", txt)
# No header: data from line 1.
write("no_header.csv", rows[0], rows[1:])
# Long enough but a single slow lean, not two swings.
write("one_swing.csv", "time_s,angle_deg", [f"{i*0.02:.3f},{10*math.cos(i*0.02*math.pi/2.4):.5f}" for i in range(120)])
# A row with one field (line 50).
short = list(rows); short[48] = "0.960"
write("short_row.csv", "time_s,angle_deg", short)
