"""Write the blank league workbook (from the schema) to templates/ and to the package's data folder.

Run from anywhere: ``python templates/make_template.py``.
"""
from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from secretary.workbook.template import PACKAGED_TEMPLATE, build_template  # noqa: E402

TARGETS = (ROOT / "templates" / "league-template.xlsx", PACKAGED_TEMPLATE)


def main() -> None:
    wb = build_template()
    for target in TARGETS:
        target.parent.mkdir(parents=True, exist_ok=True)
        wb.save(target)
        print(f"wrote {target.relative_to(ROOT)}")


if __name__ == "__main__":
    main()
