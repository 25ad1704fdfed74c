"""Regenerate the example tower file and site config of the fictional Quillmoor site.

Run from the repository root:  python examples/make_examples.py
Quillmoor is invented; its data are simulated by fluxpart.demo.
"""

from pathlib import Path

from fluxpart.demo import write_example

if __name__ == "__main__":
    path = write_example(Path(__file__).resolve().parent, seed=0, variant="c3",
                         interval_minutes=30)
    print(f"wrote {path} and {path.with_suffix('.csv')}")
