"""Dataset kinds and their loaders (plain delimited text with a header line)."""
from .kinds import KINDS, SPECTRUM_KINDS, THERMO_KINDS, Dataset, load_dataset
from .table import Table, read_table

__all__ = ["KINDS", "SPECTRUM_KINDS", "THERMO_KINDS", "Dataset", "load_dataset", "Table",
           "read_table"]
