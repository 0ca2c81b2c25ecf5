import sys
from pathlib import Path

# the generators are plain modules beside the tests (they are not part of the package)
sys.path.insert(0, str(Path(__file__).resolve().parent))
