#!/usr/bin/env python3
"""Write the invented demo data sets in analyses/data/.

Every data set here is invented for demonstration: the scenarios, the
numbers and the labels are made up and describe no real study. The script
uses only Python's standard library and a fixed seed per file, so running
it again writes the same bytes:

    python3 analyses/data/make_demo_data.py
"""
import csv
import os
import random

HERE = os.path.dirname(os.path.abspath(__file__))


def write(name, header, rows):
    with open(os.path.join(HERE, name), "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(header)
        w.writerows(rows)


def loaves():
    """A bakery tries a 90-minute proof against its standard 60 minutes."""
    rng = random.Random(20261101)
    rows = []
    for i in range(1, 101):
        proof = "long" if i % 2 else "standard"
        mu = 1840.0 if proof == "long" else 1790.0
        sd = 70.0 if proof == "long" else 52.0
        rows.append([f"L{i:03d}", proof, f"{rng.gauss(mu, sd):.1f}"])
    write("loaves.csv", ["loaf", "proof", "volume_ml"], rows)


def picking():
    """A warehouse pilots a new shelf layout; pick times are right-skewed."""
    rng = random.Random(20261112)
    rows = []
    for i in range(1, 81):
        layout = "new" if i % 2 else "old"
        scale = 24.0 if layout == "new" else 40.0
        t = 20.0 + rng.expovariate(1.0 / scale) + rng.gauss(0, 3)
        rows.append([f"P{i:03d}", layout, f"{t:.1f}"])
    write("picking.csv", ["picker", "layout", "seconds_per_order"], rows)


def commute():
    """Commuters rate stress before and after a route change (paired)."""
    rng = random.Random(20261103)
    rows = []
    for i in range(1, 41):
        before = rng.gauss(6.1, 1.3)
        after = before - rng.gauss(0.6, 0.9)
        rows.append([f"C{i:02d}", f"{before:.1f}", f"{after:.1f}"])
    write("commute.csv", ["commuter", "stress_before", "stress_after"], rows)


def espresso():
    """A café checks shot weights against its recipe's 36 g target."""
    rng = random.Random(20261104)
    rows = [[f"S{i:02d}", f"{rng.gauss(36.4, 1.1):.2f}"] for i in range(1, 31)]
    write("espresso.csv", ["shot", "grams"], rows)


def thermostat():
    """Two thermostat firmwares should hold a room equally close to 21 °C."""
    rng = random.Random(20261105)
    rows = []
    for i in range(1, 121):
        fw = "v2" if i % 2 else "v1"
        dev = rng.gauss(0.05 if fw == "v2" else 0.0, 0.35)
        rows.append([f"R{i:03d}", fw, f"{dev:.3f}"])
    write("thermostat.csv", ["room", "firmware", "deviation_c"], rows)


def tutoring():
    """A school trial of peer tutoring, three outcomes, several hypotheses."""
    rng = random.Random(20261106)
    rows = []
    for i in range(1, 91):
        arm = "tutored" if i % 2 else "usual"
        shift = 1.0 if arm == "tutored" else 0.0
        quiz = rng.gauss(62 + 5 * shift, 11)
        minutes = max(0.0, rng.gauss(34 + 2 * shift, 9))
        confidence = min(7.0, max(1.0, round(rng.gauss(4.2 + 0.2 * shift, 1.2))))
        att = "fail" if rng.random() < 0.05 else "pass"
        rows.append([f"T{i:03d}", arm, f"{quiz:.0f}", f"{minutes:.0f}", f"{confidence:.0f}", att])
    write("tutoring.csv", ["pupil", "arm", "quiz_score", "homework_minutes", "confidence", "attention_check"], rows)


if __name__ == "__main__":
    loaves()
    picking()
    commute()
    espresso()
    thermostat()
    tutoring()
