#!/usr/bin/env python3
"""Re-publish latency of `kickback lsp`: how long after an edit the editor has new diagnostics.

Builds the release binary, generates a board of about 1,000 elements with the gen_board
example, opens it in the server over stdio and then, many times, changes one resistor's value
and waits for the publishDiagnostics that answers the change. Prints the median, 90th
percentile and worst of the wall time from sending the change to reading the diagnostics;
the debounce interval (--debounce-ms, 30 ms by default) is part of that time, so the check
alone is also timed with --debounce-ms 0.

    python3 benches/lsp_latency.py [--channels 100] [--edits 40]
"""
import argparse
import json
import os
import pathlib
import statistics
import subprocess
import sys
import tempfile
import time

ROOT = pathlib.Path(__file__).resolve().parent.parent


class Client:
    def __init__(self, binary, debounce_ms):
        self.proc = subprocess.Popen(
            [binary, "lsp", "--debounce-ms", str(debounce_ms)],
            stdin=subprocess.PIPE,
            stdout=subprocess.PIPE,
        )
        self.next_id = 1

    def send(self, message):
        body = json.dumps(message).encode()
        self.proc.stdin.write(b"Content-Length: %d\r\n\r\n" % len(body) + body)
        self.proc.stdin.flush()

    def read(self):
        length = None
        while True:
            line = self.proc.stdout.readline()
            if not line:
                raise SystemExit("the server closed its output")
            line = line.strip()
            if not line:
                break
            name, _, value = line.partition(b":")
            if name.lower() == b"content-length":
                length = int(value)
        return json.loads(self.proc.stdout.read(length))

    def request(self, method, params):
        rid = self.next_id
        self.next_id += 1
        self.send({"jsonrpc": "2.0", "id": rid, "method": method, "params": params})
        while True:
            message = self.read()
            if message.get("id") == rid:
                return message

    def notify(self, method, params):
        self.send({"jsonrpc": "2.0", "method": method, "params": params})

    def diagnostics_for(self, version):
        while True:
            message = self.read()
            params = message.get("params") or {}
            if message.get("method") == "textDocument/publishDiagnostics" and params.get(
                "version"
            ) == version:
                return params["diagnostics"]

    def close(self):
        self.request("shutdown", None)
        self.notify("exit", None)
        self.proc.wait(timeout=10)


def run(binary, board, text, edits, debounce_ms):
    client = Client(binary, debounce_ms)
    client.request("initialize", {"processId": None, "rootUri": None, "capabilities": {}})
    client.notify("initialized", {})
    uri = board.as_uri()
    started = time.perf_counter()
    client.notify(
        "textDocument/didOpen",
        {"textDocument": {"uri": uri, "languageId": "spice", "version": 1, "text": text}},
    )
    first = client.diagnostics_for(1)
    opened = time.perf_counter() - started
    times = []
    for n in range(edits):
        version = n + 2
        # One resistor's value changes, as a person editing would change it.
        new_text = text.replace("RG0 out_0 g_0 100", f"RG0 out_0 g_0 {100 + version}", 1)
        started = time.perf_counter()
        client.notify(
            "textDocument/didChange",
            {
                "textDocument": {"uri": uri, "version": version},
                "contentChanges": [{"text": new_text}],
            },
        )
        client.diagnostics_for(version)
        times.append(time.perf_counter() - started)
    client.close()
    return opened, len(first), times


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--channels", type=int, default=100, help="10 elements each")
    parser.add_argument("--edits", type=int, default=40)
    args = parser.parse_args()
    subprocess.run(
        ["cargo", "build", "--release", "--quiet", "--bin", "kickback", "--example", "gen_board"],
        cwd=ROOT,
        check=True,
    )
    target = pathlib.Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target"))
    if not target.is_absolute():
        target = ROOT / target
    binary = str(target / "release" / "kickback")
    with tempfile.TemporaryDirectory() as folder:
        subprocess.run(
            [str(target / "release" / "examples" / "gen_board"), "--channels",
             str(args.channels), "--out", folder],
            check=True,
            stdout=subprocess.DEVNULL,
        )
        board = pathlib.Path(folder) / "board0000.cir"
        text = board.read_text()
        elements = sum(
            1 for line in text.splitlines() if line[:1].isalpha() and not line.startswith(".")
        ) - 1
        print(f"board: {elements} elements ({args.channels} channels), {args.edits} edits")
        for debounce in (30, 0):
            opened, found, times = run(binary, board, text, args.edits, debounce)
            ms = sorted(t * 1000 for t in times)
            p90 = ms[min(len(ms) - 1, int(len(ms) * 0.9))]
            print(
                f"debounce {debounce:>2} ms: open {opened * 1000:.0f} ms ({found} diagnostics); "
                f"edit to diagnostics: median {statistics.median(ms):.1f} ms, "
                f"p90 {p90:.1f} ms, worst {ms[-1]:.1f} ms"
            )


if __name__ == "__main__":
    sys.exit(main())
