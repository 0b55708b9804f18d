"""Reading stream, utility and cost tables; writing results, figures and reports (installed as heatloom.io)."""

from .cells import Cells, load_cells
from .costs import costs_from_mapping, read_costs, read_retrofit_costs, retrofit_costs_from_mapping
from .export import OutputDirectory, to_jsonable
from .network_table import NETWORK_ALIASES, NETWORK_COLUMNS, read_network
from .points import DEFAULT_FIT_TOLERANCE, fit_points, fit_vertices
from .scenarios import SCENARIO_COLUMNS, read_price_scenarios
from .site import MAINS_COLUMNS, Site, read_mains, read_site
from .streams import POINT_COLUMNS, SEGMENT_COLUMNS, read_streams
from .tables import ALIASES, COLUMN_KINDS, Table, TableColumn, find_header, parse_column_mapping, read_table
from .units import UNIT_REGISTRY, QuantityKind, UnitConversion, from_canonical, parse_unit, to_canonical
from .utilities import UTILITY_COLUMNS, read_utilities

__all__ = [
    "read_streams",
    "read_utilities",
    "read_costs",
    "read_retrofit_costs",
    "retrofit_costs_from_mapping",
    "read_network",
    "NETWORK_COLUMNS",
    "NETWORK_ALIASES",
    "read_site",
    "read_price_scenarios",
    "SCENARIO_COLUMNS",
    "read_mains",
    "Site",
    "MAINS_COLUMNS",
    "costs_from_mapping",
    "OutputDirectory",
    "to_jsonable",
    "fit_points",
    "fit_vertices",
    "DEFAULT_FIT_TOLERANCE",
    "SEGMENT_COLUMNS",
    "POINT_COLUMNS",
    "UTILITY_COLUMNS",
    "ALIASES",
    "COLUMN_KINDS",
    "Cells",
    "Table",
    "TableColumn",
    "load_cells",
    "read_table",
    "find_header",
    "parse_column_mapping",
    "QuantityKind",
    "UnitConversion",
    "UNIT_REGISTRY",
    "parse_unit",
    "to_canonical",
    "from_canonical",
]
