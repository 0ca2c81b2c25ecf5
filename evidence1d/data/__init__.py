"""Dataset kinds and their loaders: the kind objects (kind_base.py, spectrum_kinds.py,
thermo_kinds.py; the registry and the Dataset in kinds.py), delimited text (table.py) and
HDF5/NeXus NXdata (nexus.py); column names, error spellings and header units (columns.py)."""
from .kinds import (KINDS, SAMPLE_EXTRAS, SPECTRUM_KINDS, THERMO_KINDS, Dataset, DatasetKind,
                    kind_named, load_dataset)
from .table import Table, read_table

__all__ = ["KINDS", "SPECTRUM_KINDS", "THERMO_KINDS", "SAMPLE_EXTRAS", "Dataset", "DatasetKind",
           "kind_named", "load_dataset", "Table", "read_table"]
