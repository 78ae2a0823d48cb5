"""The words the pages use for the scene kinds (what is photographed), in the order offered.

The kinds and their emissivity bounds are the core's (:data:`glowtemp.estimation.brightness.SCENES`);
``label`` answers "What are you photographing?", ``short`` follows an emissivity range in
small print ("emissivity 0.9-1, kiln").
"""

from __future__ import annotations

SCENE_WORDS = {
    "kiln": {"label": "inside a kiln, through a spy hole", "short": "kiln"},
    "steel": {"label": "hot steel", "short": "hot steel"},
    "other": {"label": "something else", "short": "unknown surface"},
}


def emissivity_text(result: dict) -> str | None:
    """"emissivity 0.9-1, kiln" for a result whose band used brightness, else None.

    >>> emissivity_text({"scene": "steel", "emissivity": [0.7, 0.95], "channels": ["colour", "brightness"]})
    'emissivity 0.7-0.95, hot steel'
    """
    if "brightness" not in (result.get("channels") or []) or not result.get("emissivity"):
        return None
    low, high = result["emissivity"]
    words = SCENE_WORDS.get(result.get("scene"), {}).get("short", result.get("scene"))
    return f"emissivity {low:g}-{high:g}, {words}"
