"""Timeline outputs: the printed summary and the output folder (written all or nothing).

Nothing here computes hydrology; it formats :class:`coveryield.timeline.Timeline` results.
"""

from __future__ import annotations

from pathlib import Path

from coveryield.comparison import CAUTION, Comparison
from coveryield.reports import _signed
from coveryield.timeline import SUMMARY_PERIODS, Timeline

#: Files written by :func:`write_timeline_outputs`.
TIMELINE_FILES = ("timeline.csv", "report.html", "README.txt")


def timeline_text(result: Comparison, timeline: Timeline) -> str:
    """Summarise every plan's path after planting as plain text.

    Parameters
    ----------
    result : Comparison
        The comparison the timeline was built on.
    timeline : Timeline
        The timelines.

    Returns
    -------
    str
        Lines with units in the headers and the caution at the end.
    """
    spec = result.plan_file.catchment
    record = timeline.record_years
    lines = [
        f"{spec.name}: {timeline.n_years} years from {timeline.start_year} (year 1); weather of "
        f"{record[0]}-{record[-1]} in order"
        + (", cycled (the record is shorter than the timeline)" if timeline.cycles_weather else ""),
        "",
    ]
    periods = [
        (a, timeline.n_years if b is None else min(b, timeline.n_years))
        for a, b in SUMMARY_PERIODS
        if a <= timeline.n_years
    ]
    labels = [f"yrs {a}-{b}" for a, b in periods]
    header = f"{'plan':<24}{'schedule':<22}{'mature':>9}" + "".join(f"{x:>15}" for x in labels)
    units = f"{'':<24}{'':<22}{'mm/yr':>9}" + f"{'mm/yr (% mat.)':>15}" * len(periods)
    lines += [header, units, "-" * len(header)]
    for name, plan in timeline.plans.items():
        row = f"{name[:23]:<24}{plan.schedule_label[:21]:<22}{_signed(plan.mature_change_mm):>9}"
        for first, last in periods:
            change, share = plan.period_change(first, last)
            share_text = "n/a" if share != share else f"{share:.0f}"
            row += f"{_signed(change) + ' (' + share_text + ')':>15}"
        lines.append(row)
    lines += [
        "",
        "change against `current` on the same year's weather (negative = less water); mature: "
        "the change once every stand is mature (mean over the record, as `compare` reports); "
        "(% mat.): the period's change as a share of the mature plan's change on the same "
        "weather.",
        "",
        f"CAUTION: {CAUTION}",
    ]
    return "\n".join(lines)


def _readme_text(result: Comparison, timeline: Timeline) -> str:
    return "\n".join(
        [
            f"coveryield timeline: {result.plan_file.catchment.name}",
            f"plan file: {result.plan_file.source}",
            f"{timeline.n_years} years from {timeline.start_year}; weather years "
            f"{timeline.record_years[0]}-{timeline.record_years[-1]} in order"
            + (", cycled" if timeline.cycles_weather else ""),
            "",
            "timeline.csv  per plan (current first) and year: yield, evaporation and rain",
            "              (mm over the whole catchment), change against current on the same",
            "              weather (mm, %, ML), the mature plan's change on that weather, area in",
            "              growing stands (%) and their mean age (years), and the other",
            "              water-balance terms (mm)",
            "report.html   one-page report with charts (self-contained; open in a browser)",
            "",
            f"CAUTION: {CAUTION}",
            "",
        ]
    )


#: Files :func:`write_timeline_outputs` writes (the folder's manifest comes on top).
TIMELINE_FILES = ("timeline.csv", "report.html", "README.txt")


def write_timeline_outputs(
    result: Comparison, timeline: Timeline, out_dir, *, force: bool = False
) -> Path:
    """Write ``timeline.csv``, ``report.html`` and ``README.txt`` into a folder, all or nothing.

    Everything is written into a staging folder first and moved into place only when complete;
    the folder's manifest lists what was written (see :mod:`coveryield.output_folder`).

    Parameters
    ----------
    result : Comparison
        The comparison the timeline was built on.
    timeline : Timeline
        The timelines.
    out_dir : OutputFolder or path
        A folder checked with :func:`coveryield.output_folder.check_output_folder` before the
        work (the command line does this), or a path, checked here: new or empty, or with
        ``force`` one holding coveryield's own earlier outputs.
    force : bool
        Replace coveryield's own, unchanged earlier outputs (ignored for a checked folder).

    Returns
    -------
    pathlib.Path
        The output folder.

    Raises
    ------
    coveryield.errors.OutputError
        If the folder cannot take the outputs, or cannot be written.
    """
    from coveryield.output_folder import OutputFolder, check_output_folder
    from coveryield.report_timeline import render_timeline_report

    target = out_dir
    if not isinstance(target, OutputFolder):
        target = check_output_folder(out_dir, TIMELINE_FILES, force=force,
                                     inputs=result.plan_file.input_files())
    page = render_timeline_report(result, timeline)  # before touching the disk
    table = timeline.table()

    def write(folder: Path) -> None:
        table.to_csv(folder / "timeline.csv", index=False, float_format="%.3f")
        (folder / "report.html").write_text(page, encoding="utf-8")
        (folder / "README.txt").write_text(_readme_text(result, timeline), encoding="utf-8")

    return target.write(write)
