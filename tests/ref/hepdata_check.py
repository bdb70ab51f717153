"""Validate a HEPData submission folder with the hepdata-validator package (run as an
external tool; GPL, never linked) and read every YAML file back with PyYAML, checking
that every value and error is a number (not a string).

usage: hepdata_check.py DIR   prints "valid 1", "numeric_values N" and "numeric_errors N"
on success
"""
import os
import sys

import yaml
from hepdata_validator.full_submission_validator import FullSubmissionValidator

folder = sys.argv[1]
v = FullSubmissionValidator()
ok = v.validate(directory=folder)
if not ok:
    v.print_errors(os.path.join(folder, "submission.yaml"))
    for f in os.listdir(folder):
        v.print_errors(os.path.join(folder, f))
    sys.exit(1)

count = 0
errors = 0
for name in sorted(os.listdir(folder)):
    if name == "submission.yaml":
        continue
    with open(os.path.join(folder, name)) as fh:
        doc = yaml.safe_load(fh)
    for group in ("independent_variables", "dependent_variables"):
        for var in doc[group]:
            for val in var["values"]:
                if not isinstance(val["value"], (int, float)):
                    sys.exit(f"{name}: value {val['value']!r} is not a number")
                count += 1
                for err in val.get("errors", []):
                    if not isinstance(err["symerror"], (int, float)):
                        sys.exit(f"{name}: error {err['symerror']!r} is not a number")
                    errors += 1
print("valid 1")
print("numeric_values", count)
print("numeric_errors", errors)
