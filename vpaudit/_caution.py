"""The caution every report and the command line's help carry, in one place."""

CAUTION = (
    "vpaudit screens vapour-pressure data for inconsistencies; it does not certify them. "
    "Where results feed hazardous work (toxic or flammable vapours, vacuum or pressure "
    "equipment), rely on primary sources, local codes and licensed practice."
)
