#!/usr/bin/env python3
"""Seed corpus for the `requests` fuzz target, from the invented notes in
corpora-synthetic/*.txt and the notes of the Python client tests.

Each note gives four inputs: a `check --stdin-json` request, the note as a JSON string
(the target's structured mode wraps it in a whole LSP session), and an LSP session as
newline-delimited messages and as Content-Length framed messages.

Run from fuzz/: python3 seed_requests.py  (writes corpus/requests/)
"""

import json
import pathlib

HERE = pathlib.Path(__file__).resolve().parent
ROOT = HERE.parent
OUT = HERE / "corpus" / "requests"

# The notes of tests/python/test_lsp.py and tests/python/test_check.py.
CLIENT_TEST_NOTES = [
    "Obs: T 36.9 °C, BP 98/60, HR 72\nFeels better 😀 · Cr 130 µmol/L · Wt 82.4\nO/E: no crackles\n",
    "Feels better 😀 · T 36.9 °C\nCr 130 µmol/L, K 4.1\nWt 82.4\nO/E: no crackles, mild ankle oedema\n",
]


def session(text):
    uri = "file:///tmp/invented/note-%C2%B5.txt"
    doc = {"uri": uri}
    return [
        {"jsonrpc": "2.0", "id": 1, "method": "initialize",
         "params": {"capabilities": {}, "initializationOptions": {"date_order": "dmy"}}},
        {"jsonrpc": "2.0", "method": "initialized", "params": {}},
        {"jsonrpc": "2.0", "method": "textDocument/didOpen",
         "params": {"textDocument": {"uri": uri, "languageId": "plaintext", "version": 1,
                                     "text": text}}},
        {"jsonrpc": "2.0", "id": 2, "method": "textDocument/hover",
         "params": {"textDocument": doc, "position": {"line": 1, "character": 3}}},
        {"jsonrpc": "2.0", "id": 3, "method": "textDocument/documentSymbol",
         "params": {"textDocument": doc}},
        {"jsonrpc": "2.0", "method": "textDocument/didChange",
         "params": {"textDocument": {"uri": uri, "version": 2},
                    "contentChanges": [{"range": {"start": {"line": 0, "character": 2},
                                                  "end": {"line": 1, "character": 0}},
                                        "text": " kg\n"}]}},
        {"jsonrpc": "2.0", "id": 4, "method": "textDocument/codeAction",
         "params": {"textDocument": doc,
                    "range": {"start": {"line": 0, "character": 0},
                              "end": {"line": 9, "character": 0}},
                    "context": {"diagnostics": []}}},
        {"jsonrpc": "2.0", "method": "workspace/didChangeConfiguration",
         "params": {"settings": {"tidemark": {"unit_system": "us"}}}},
        {"jsonrpc": "2.0", "method": "textDocument/didClose", "params": {"textDocument": doc}},
        {"jsonrpc": "2.0", "id": 5, "method": "shutdown"},
        {"jsonrpc": "2.0", "method": "exit"},
    ]


def framed(messages):
    out = b""
    for m in messages:
        body = json.dumps(m, ensure_ascii=False).encode("utf-8")
        out += b"Content-Length: %d\r\n\r\n" % len(body) + body
    return out


def main():
    OUT.mkdir(parents=True, exist_ok=True)
    notes = [(p.stem, p.read_text(encoding="utf-8"))
             for p in sorted((ROOT / "corpora-synthetic").glob("*.txt"))]
    notes += [(f"client-test-{i}", t) for i, t in enumerate(CLIENT_TEST_NOTES)]
    for name, text in notes:
        request = {"text": text, "path": f"{name}.txt", "config": {"date_order": "dmy"}}
        msgs = session(text)
        files = {
            f"{name}.check.json": json.dumps(request, ensure_ascii=False).encode("utf-8"),
            f"{name}.string.json": json.dumps(text, ensure_ascii=False).encode("utf-8"),
            f"{name}.lsp.jsonl": "\n".join(json.dumps(m, ensure_ascii=False)
                                           for m in msgs).encode("utf-8"),
            f"{name}.lsp.framed": framed(msgs),
        }
        for fname, data in files.items():
            (OUT / fname).write_bytes(data)
    print(f"{len(notes) * 4} seeds in {OUT}")


if __name__ == "__main__":
    main()
