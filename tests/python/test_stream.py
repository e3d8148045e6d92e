"""Streaming mode: `tidemark extract --input jsonl --format jsonl` as a line-oriented mapper.

Checks order, one output line per input line, error lines for bad input, flushing after
every line (a reader gets each answer before sending the next line), and memory that does
not grow with the number of lines.
"""

import json
import os
import select
import subprocess
import sys

CMD = ["extract", "--input", "jsonl", "--format", "jsonl"]

NOTE = "Obs: T 37.2 °C, BP 98/60, HR 72\nCr 130 µmol/L 😀\nWt 82.4\nno crackles\n"


def run(binary, data: bytes):
    p = subprocess.run([binary, *CMD], input=data, capture_output=True, timeout=300)
    lines = p.stdout.decode("utf-8").splitlines()
    return p.returncode, [json.loads(l) for l in lines]


def test_order_and_one_line_per_input_line(binary):
    ids = [f"n{i}" if i % 3 else i for i in range(300)]
    data = "".join(json.dumps({"id": i, "text": f"{NOTE}#{i}"}) + "\n" for i in ids)
    code, out = run(binary, data.encode())
    assert code == 0
    assert [o["id"] for o in out] == ids
    assert all(o["schema"] == "tidemark-extract/1" for o in out)
    assert all("error" not in o for o in out)


def test_bad_lines_give_error_lines_and_the_run_goes_on(binary):
    lines = [
        json.dumps({"id": "ok-1", "text": NOTE}).encode(),
        b'{"id": "broken", "text": "unterminated',
        json.dumps({"id": "no-text"}).encode(),
        json.dumps({"id": ["list"], "text": "x"}).encode(),
        b"",
        b"\xff\xfe not utf-8",
        json.dumps({"id": 7, "text": ""}).encode(),
        json.dumps({"id": "ok-2", "text": NOTE}).encode(),
    ]
    code, out = run(binary, b"\n".join(lines) + b"\n")
    assert code == 1, "error lines make the exit code 1"
    assert len(out) == len(lines)
    assert out[0]["id"] == "ok-1" and "error" not in out[0]
    assert out[1] == {
        "id": "broken",
        "line": 2,
        "error": {"code": "invalid-json", "message": out[1]["error"]["message"]},
    }
    assert out[2]["id"] == "no-text" and out[2]["error"]["code"] == "invalid-request"
    assert out[3]["error"]["code"] == "invalid-request"
    assert out[4]["error"]["code"] == "empty-line" and out[4]["line"] == 5
    assert out[5]["error"]["code"] == "invalid-json" and out[5]["id"] is None
    # An empty note is answered (with its warning), not rejected.
    assert out[6]["id"] == 7 and out[6]["warnings"][0]["code"] == "empty"
    assert out[7]["id"] == "ok-2" and "error" not in out[7]


def test_each_line_is_flushed_before_the_next_is_read(binary):
    p = subprocess.Popen(
        [binary, *CMD], stdin=subprocess.PIPE, stdout=subprocess.PIPE, bufsize=0
    )
    try:
        for i in range(5):
            p.stdin.write((json.dumps({"id": i, "text": NOTE}) + "\n").encode())
            p.stdin.flush()
            # The answer must arrive while stdin is still open.
            ready, _, _ = select.select([p.stdout], [], [], 30)
            assert ready, f"no answer to line {i} within 30 s: output is not flushed"
            line = p.stdout.readline()
            assert json.loads(line)["id"] == i
    finally:
        p.stdin.close()
        p.wait(timeout=30)
    assert p.returncode == 0


def peak_rss_kb(binary, path, out_path) -> int:
    """Peak resident memory of one run, measured in a fresh Python process."""
    code = (
        "import resource, subprocess, sys\n"
        "with open(sys.argv[2], 'rb') as i, open(sys.argv[3], 'wb') as o:\n"
        "    subprocess.run([sys.argv[1], *sys.argv[4:]], stdin=i, stdout=o, check=False)\n"
        "print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)\n"
    )
    p = subprocess.run(
        [sys.executable, "-c", code, binary, str(path), str(out_path), *CMD],
        capture_output=True,
        text=True,
        timeout=600,
    )
    return int(p.stdout.strip())


def test_ten_thousand_lines_in_bounded_memory(binary, tmp_path):
    # Each line carries about 4 KB of note text: 10,000 lines are about 40 MB of input.
    text = (NOTE * 60)[:4000]
    small, large = tmp_path / "small.jsonl", tmp_path / "large.jsonl"
    for path, n in ((small, 1000), (large, 10000)):
        with open(path, "w", encoding="utf-8") as f:
            for i in range(n):
                f.write(json.dumps({"id": i, "text": text}) + "\n")
    rss_small = peak_rss_kb(binary, small, tmp_path / "small.out")
    rss_large = peak_rss_kb(binary, large, tmp_path / "large.out")
    with open(tmp_path / "large.out", encoding="utf-8") as f:
        count = sum(1 for _ in f)
    assert count == 10000
    assert os.path.getsize(large) > 35_000_000
    # Holding the input would cost at least the 36 MB more the large run reads; streaming
    # keeps the peak within a few MB of the small run's.
    assert rss_large - rss_small < 16 * 1024, (rss_small, rss_large)
