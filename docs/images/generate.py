"""Regenerate the pictures of docs/reports.md from the demo flowsheets: ``python docs/images/generate.py``."""

from pathlib import Path

from balance.analysis.key_figures import key_figures
from balance.flowsheet.file_format import load
from balance.report import figures
from balance.solve import Solver, solve

ROOT = Path(__file__).resolve().parents[2]
HERE = Path(__file__).resolve().parent


def main() -> None:
    evaporator = solve(load(ROOT / "flowsheets" / "skim_milk_3_effect_forward.toml")).raise_if_failed()
    dryer = solve(load(ROOT / "flowsheets" / "whole_milk_powder_heat_recovery.toml")).raise_if_failed()
    pictures = {
        "flowsheet.svg": figures.flowsheet_svg(evaporator),
        "energy_flows.svg": figures.energy_flow_svg(evaporator),
        "effect_profile.svg": figures.effect_profile_svg(evaporator),
        "flowsheet_dryer.svg": figures.flowsheet_svg(dryer),
        "psychrometric_chart.svg": figures.psychrometric_svg(figures.air_path(dryer)),
    }
    # a small sweep of the feed rate, warm-started case to case, for the sweep plot
    solver = Solver(load(ROOT / "flowsheets" / "skim_milk_3_effect_forward.toml"))
    rows, previous = [], None
    for t_per_h in range(14, 27, 2):
        solver.set("feed.flow", t_per_h / 3.6)
        case = solver.solve(warm=previous)
        previous = case if case.converged else None
        kf = key_figures(case)
        rows.append({"feed.flow": t_per_h / 3.6, "heating_area": kf["heating_area"].value,
                     "steam_economy": kf["steam_economy"].value, "converged": case.converged})
    pictures["sweep.svg"] = figures.sweep_svg(rows, "feed.flow", "heating_area", x_kind="mass_flow",
                                              x_label="feed [kg/h]", y_label="heating area of the effects [m2]")
    for name, svg in pictures.items():
        (HERE / name).write_text(svg, encoding="utf-8")
        print("wrote", HERE / name)


if __name__ == "__main__":
    main()
