"""Response times of the study page's /api/design, per family (a measurement, not a test).

Usage, from the repository root, with a page running (`loopwright serve --port 0` prints URL):
    python3 tests/py/serve_timing.py http://127.0.0.1:PORT
41 briefs per family (demo brief, entry speed 20..30 m/s; profile: examples/profile-brief.toml).
Prints the median and 95th percentile of the server's work (server_ms), of design() alone
(design_ms) and of the round trip, in milliseconds. Figures depend on the machine and its load.
"""
import json, sys, time, statistics, urllib.request
url = sys.argv[1]
demo = json.load(urllib.request.urlopen(url + "/api/demo"))["brief_toml"]
briefs = {"circle": demo, "clothoid": demo, "spline": demo}
try:
    briefs["profile"] = open("examples/profile-brief.toml").read()
except OSError:
    pass
for fam, toml in briefs.items():
    server, wall, model, statuses = [], [], [], {}
    for i in range(41):
        speed = 20 + 10 * i / 40
        body = json.dumps({"seq": i, "brief_toml": toml, "fields": {"shape": fam, "entry-speed": f"{speed:.2f}"}}).encode()
        req = urllib.request.Request(url + "/api/design", data=body, headers={"Content-Type": "application/json"})
        t = time.perf_counter()
        try:
            r = urllib.request.urlopen(req); a = json.load(r)
        except urllib.error.HTTPError as e:
            a = json.load(e)
        wall.append((time.perf_counter() - t) * 1e3)
        server.append(a.get("server_ms", float("nan"))); model.append(a.get("design_ms", float("nan")))
        statuses[a["status"]] = statuses.get(a["status"], 0) + 1
    q = lambda xs, p: sorted(xs)[min(len(xs) - 1, int(round(p * (len(xs) - 1))))]
    print(f"{fam:9s} n=41 {statuses} server ms median {statistics.median(server):.1f} p95 {q(server,0.95):.1f} | design() alone median {statistics.median(model):.1f} p95 {q(model,0.95):.1f} | round trip median {statistics.median(wall):.1f} p95 {q(wall,0.95):.1f}")
