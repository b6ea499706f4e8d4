"""Fixtures for the report tests: the saved designs in tests/data/report, and plain stage specs
written on the fly (invented stages) to cover both topologies, both polarities and absent parts.
"""

from __future__ import annotations

from pathlib import Path

DATA = Path(__file__).resolve().parent.parent / "data" / "report"
FOLLOWER = DATA / "follower_design.toml"  # NPN follower, RE a series pair, 4 units
CE_PNP = DATA / "ce_pnp_design.toml"  # PNP common emitter, RC a parallel pair, bypassed RE2, 3 units
PLAIN = DATA / "plain_spec.toml"  # NPN common emitter, no design keys

# name -> (topology, polarity, supply, source resistance or None, load or None, parts)
VARIANTS = {
    "ef-pnp-no-rs": ("emitter-follower", "pnp", "9 V", None, "4k7",
                     {"R1": "6k8", "R2": "5k6", "RE": "1k", "C1": "10u", "C2": "47u"}),
    "ef-npn-no-load": ("emitter-follower", "npn", "15 V", "1k", None,
                       {"R1": "68k", "R2": "82k", "RE": "6k8", "C1": "1u", "C2": "10u"}),
    "ce-npn-re2-bypassed": ("common-emitter", "npn", "12 V", "600", "10k",
                            {"R1": "47k", "R2": "10k", "RE": "220", "RE2": "1k", "RC": "4k7",
                             "C1": "10u", "C2": "10u", "CE": "100u"}),
    "ce-npn-re2-unbypassed": ("common-emitter", "npn", "20 V", "2k2", None,
                              {"R1": "100k", "R2": "15k", "RE": "330", "RE2": "1k5", "RC": "10k",
                               "C1": "2u2", "C2": "1u"}),
    "ce-pnp-no-re2": ("common-emitter", "pnp", "12 V", "600", "10k",
                      {"R1": "10k", "R2": "47k", "RE": "1k", "RC": "4k7", "C1": "10u", "C2": "10u"}),
}


def write_spec(tmp_path: Path, name: str, *, targets: dict | None = None, hfe=(100, 300)) -> Path:
    topology, polarity, supply, rs, load, parts = VARIANTS[name]
    lines = [f'topology = "{topology}"', f'polarity = "{polarity}"', f'supply = "{supply}"']
    if rs:
        lines.append(f'source_resistance = "{rs}"')
    if load:
        lines.append(f'load = "{load}"')
    lines += ["", "[transistor]", f'label = "QX-{polarity.upper()}-T"', f"hfe_min = {hfe[0]}", f"hfe_max = {hfe[1]}",
              "", "[parts]"] + [f'{k} = "{v}"' for k, v in parts.items()]
    if targets:
        lines += ["", "[targets]"] + [f'{k} = "{v}"' for k, v in targets.items()]
    path = tmp_path / f"{name}.toml"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def with_networks(tmp_path: Path, base: Path, networks: dict, name: str = "network.toml") -> Path:
    """A copy of a design file in which each role of ``networks`` (role -> (arrangement, values))
    is made of those parts (bins X-0, X-1...; invented), its value unchanged: the values given
    must make the role's value."""
    import tomllib

    import tomli_w

    data = tomllib.loads(base.read_text(encoding="utf-8"))
    for role, (arrangement, values) in networks.items():
        t = data["design"]["roles"].setdefault(role, {})
        t["arrangement"] = arrangement
        t["parts"] = [{"value": v, "location": f"X-{i}", "source": {"file": "bench_drawer.csv", "row": 50 + i}}
                      for i, v in enumerate(values)]
    data.pop("pick_list", None)
    path = tmp_path / name
    path.write_text(tomli_w.dumps(data), encoding="utf-8")
    return path
