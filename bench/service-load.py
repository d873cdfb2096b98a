#!/usr/bin/python3
"""Load test of the lab service (docs/service.md, "Load"): not part of CI's default run.

Makes SETS different ten-run sweeps with `nffit simulate` (rotor θ̇ = μ − sin θ, an invented demo scenario, one
seed per sweep), answers each with `nffit analyze --json` on the command line, then starts `nffit serve --port 0`
on a fresh data folder and lets CLIENTS clients upload at once (client k uploads sweep k mod SETS, files and
manifest as multipart/form-data), poll until their job ends and fetch report.json. Passes when every job is done
and every report.json equals the command line's byte for byte; prints latency (upload to done, per client) and
throughput (jobs per minute over the whole burst).

Usage: bench/service-load.py [WORKDIR]   (env: CLIENTS=20, SETS=4, WORKERS=cores, REVOLUTIONS=5)
Python standard library only.
"""
import json
import os
import re
import shutil
import statistics
import subprocess
import sys
import threading
import time
import urllib.request
import uuid

root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
work = sys.argv[1] if len(sys.argv) > 1 else os.path.join(os.environ.get("TMPDIR", "/tmp"), "nffit-service-load")
clients = int(os.environ.get("CLIENTS", "20"))
sets = int(os.environ.get("SETS", "4"))
workers = int(os.environ.get("WORKERS", str(os.cpu_count())))
revolutions = os.environ.get("REVOLUTIONS", "5")
params = "1.02,1.03,1.05,1.07,1.1,1.13,1.17,1.22,1.28,1.35"

subprocess.run(["dotnet", "build", os.path.join(root, "src/NormalFormFit.Cli"), "-c", "Release", "-v", "q", "-nologo"], check=True, stdout=subprocess.DEVNULL)
nffit = ["dotnet", os.path.join(root, "src/NormalFormFit.Cli/bin/Release/net10.0/nffit.dll")]
os.makedirs(work, exist_ok=True)

sweeps = []
for s in range(sets):
    folder = os.path.join(work, f"sweep-{s}")
    if not os.path.exists(os.path.join(folder, "manifest.csv")):
        subprocess.run(nffit + ["simulate", "--params", params, "--revolutions", revolutions, "--noise", "0.01", "--seed", str(100 * s + 1), "--out", folder, "--quiet"], check=True)
    reference = os.path.join(work, f"cli-{s}.json")
    t0 = time.monotonic()
    subprocess.run(nffit + ["analyze", os.path.join(folder, "manifest.csv"), "--json", reference, "--quiet", "--threads", "1"], check=True)
    cli_seconds = time.monotonic() - t0
    files = sorted(f for f in os.listdir(folder) if f.endswith(".csv"))
    sweeps.append((folder, files, open(reference, "rb").read(), cli_seconds))

data = os.path.join(work, "data")
shutil.rmtree(data, ignore_errors=True)
server = subprocess.Popen(nffit + ["serve", "--port", "0", "--data", data, "--workers", str(workers), "--queue", str(max(32, clients))], stdout=subprocess.PIPE, text=True)
line = server.stdout.readline()
m = re.search(r"serving on (http://[^/\s]+)/", line)
if not m:
    server.kill()
    sys.exit(f"service-load: serve did not start: {line!r}")
base = m.group(1)


def body(folder, files):
    boundary = uuid.uuid4().hex
    parts = []
    for f in files:
        with open(os.path.join(folder, f), "rb") as fh:
            parts.append(f'--{boundary}\r\nContent-Disposition: form-data; name="files"; filename="{f}"\r\n\r\n'.encode() + fh.read() + b"\r\n")
    return b"".join(parts) + f"--{boundary}--\r\n".encode(), boundary


results = [None] * clients
start = threading.Barrier(clients)


def client(k):
    folder, files, expected, _ = sweeps[k % sets]
    payload, boundary = body(folder, files)
    start.wait()
    t0 = time.monotonic()
    try:
        req = urllib.request.Request(base + "/api/analyses", data=payload, method="POST", headers={"Content-Type": f"multipart/form-data; boundary={boundary}"})
        with urllib.request.urlopen(req, timeout=600) as r:
            job_id = json.load(r)["id"]
        t_accepted = time.monotonic() - t0
        while True:
            with urllib.request.urlopen(f"{base}/api/analyses/{job_id}", timeout=600) as r:
                job = json.load(r)
            if job["status"] in ("done", "failed"):
                break
            time.sleep(0.2)
        t_done = time.monotonic() - t0
        same = False
        if job["status"] == "done":
            with urllib.request.urlopen(f"{base}/analyses/{job_id}/report.json", timeout=600) as r:
                same = r.read() == expected
        results[k] = (job["status"], same, t_accepted, t_done, job.get("error"))
    except Exception as e:  # noqa: BLE001 - every failure is reported, none lost silently
        results[k] = ("error", False, None, time.monotonic() - t0, repr(e))


threads = [threading.Thread(target=client, args=(k,)) for k in range(clients)]
wall0 = time.monotonic()
for t in threads:
    t.start()
for t in threads:
    t.join()
wall = time.monotonic() - wall0
server.terminate()
server.wait(timeout=60)

done = sum(1 for r in results if r and r[0] == "done")
same = sum(1 for r in results if r and r[1])
lat = sorted(r[3] for r in results if r and r[3] is not None)
acc = sorted(r[2] for r in results if r and r[2] is not None)
print(f"machine: {os.cpu_count()} cores; load before: {open('/proc/loadavg').read().split()[:3]}; workers={workers}; {clients} clients, {sets} different 10-run sweeps ({revolutions} revolutions a run)")
print(f"command line, one sweep, --threads 1: {statistics.median(s[3] for s in sweeps):.2f} s (median of {sets})")
print(f"jobs done: {done}/{clients}; report.json equal to the command line's: {same}/{clients}")
print(f"upload accepted (202) after: median {statistics.median(acc):.2f} s, max {max(acc):.2f} s")
print(f"latency upload→done: min {lat[0]:.1f} s, median {statistics.median(lat):.1f} s, max {lat[-1]:.1f} s")
print(f"throughput: {clients / wall * 60:.1f} jobs/min ({wall:.1f} s for the burst)")
for k, r in enumerate(results):
    if not r or r[0] != "done" or not r[1]:
        print(f"client {k}: {r}")
sys.exit(0 if done == clients and same == clients else 1)
