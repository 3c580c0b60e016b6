"""The cautions carried by every output (workbook, JSON, console). See SAFETY.md."""

CAUTIONS: tuple[str, ...] = (
    "These results are an engineering calculation for review and acceptance by a qualified, "
    "licensed engineer; they are not a certification of any equipment.",
    "Available fault current changes whenever the utility supply or the system changes: confirm "
    "the source data with the serving utility and recalculate after every change.",
    "The results are only as good as the input: field-verify transformer nameplates, conductor "
    "sizes, lengths, raceways and equipment ratings before relying on them.",
    "NFPA 70 (National Electrical Code) or the locally adopted electrical code, the authority "
    "having jurisdiction and licensed engineering review govern; where they differ from these "
    "results or this tool's assumptions, they prevail.",
    "An arc-flash hazard analysis is a separate study; these currents are one of its inputs, not "
    "its result.",
    "Never work on or near energized equipment on the strength of these numbers; follow NFPA 70E "
    "or the locally applicable electrical safety rules.",
)

SHORT_CAUTION = (
    "For review by a qualified engineer; confirm source data with the utility; local "
    "code and the authority having jurisdiction govern. See 'Basis and cautions'."
)
