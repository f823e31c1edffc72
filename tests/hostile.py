"""A valid schedule whose every free text is hostile: markup, script, XML and Markdown syntax.

Used by the escaping tests of the writers and by the browser test. The building is invented.
"""

from __future__ import annotations

from pathlib import Path

import yaml

SCRIPT = "<script>alert('x')</script>"
IMG = '<img src=x onerror="alert(1)">'
#: text that must come out literally in every report
PROJECT = f'Hall & "Annex" {SCRIPT} ]]> <!-- --> | *bold* `tick` [a](b) @team'
SYSTEM_ID = 'AHU<b>&amp;"1"'
ZONE_ID = f"{IMG}"
ZONE_NAME = "Room </td></tr></table><h1>injected</h1> & <svg onload=alert(2)>"
REASON = "Approved </textarea><script>alert(3)</script> ]]> & | ~~gone~~"


def hostile_schedule(folder: Path) -> Path:
    """Write the schedule (one failing zone, one waiver) to ``folder`` and return its path."""
    data = {
        "schedule": 1,
        "project": {"name": PROJECT, "units": "IP", "notes": SCRIPT},
        "rules": "ashrae-62.1-2019",
        "systems": [{
            "id": SYSTEM_ID, "name": f"Unit {SCRIPT}", "kind": "multiple-zone",
            "outdoor_air": "300 cfm", "ventilation_efficiency": "detailed",
            "zones": [
                {"id": ZONE_ID, "name": ZONE_NAME, "space": "conference-meeting",
                 "area": "600 ft2", "occupants": 30, "air_distribution": "ceiling-supply-cool",
                 "primary_airflow": "300 cfm", "height": "9 ft"},
                {"id": "2&2", "name": "Office <i>", "space": "office-space", "area": "1000 ft2",
                 "air_distribution": "ceiling-supply-cool", "primary_airflow": "900 cfm"},
            ]}],
        "waivers": [{"rule": "zone-limits-ev", "subject": f"{SYSTEM_ID}/{ZONE_ID}",
                     "reason": REASON, "approved_by": f"Reviewer {IMG}"}],
    }
    path = folder / "hostile.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False, allow_unicode=True), encoding="utf-8")
    return path
