"""Dataset kinds and their loaders: delimited text (table.py) and HDF5/NeXus NXdata
(nexus.py); column names, error spellings and header units (columns.py)."""
from .kinds import KINDS, SPECTRUM_KINDS, THERMO_KINDS, Dataset, load_dataset
from .table import Table, read_table

__all__ = ["KINDS", "SPECTRUM_KINDS", "THERMO_KINDS", "Dataset", "load_dataset", "Table",
           "read_table"]
