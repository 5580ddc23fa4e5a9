import sys
from pathlib import Path

# test helpers (engine_cases.py) live beside the tests
sys.path.insert(0, str(Path(__file__).parent))
