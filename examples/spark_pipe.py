"""Run tidemark under Spark in local mode through RDD.pipe (run by hand, not in CI).

usage: python spark_pipe.py PATH/TO/tidemark PATH/TO/notes.jsonl

Each partition's elements go to one tidemark process, one JSON line each; tidemark answers
every line with one line, in order, so input and output pair up by position and by `id`.
"""

import json
import sys

from pyspark import SparkContext


def main(binary: str, notes: str) -> None:
    sc = SparkContext("local[2]", "tidemark-pipe")
    try:
        lines = sc.textFile(notes, minPartitions=2)
        results = lines.pipe(f"{binary} extract --input jsonl --format jsonl").map(json.loads)
        for r in results.collect():
            if "error" in r:
                print(f"{r['id']}: error {r['error']['code']}: {r['error']['message']}")
            else:
                concepts = sorted({m["concept"] for m in r["measurements"]})
                print(f"{r['id']}: profile {r['profile']['label']}; measured {', '.join(concepts) or '-'}")
    finally:
        sc.stop()


if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit(__doc__)
    main(sys.argv[1], sys.argv[2])
