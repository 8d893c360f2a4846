"""The small demo world, a quick regime model and a running `isohypse serve`
for the service tests (test_service.py, test_service_browser.py)."""
import json
import os
import re
import shutil
import signal
import subprocess
import time
import urllib.error
import urllib.request

from common import BIN, BUILD, run
from derive_data import derive, write_config

DOMAIN = "20,80,170,-40"
# Few partitions and surrogates: the model only has to exist.
QUICK = {"regimes": {"classifiability_runs": 5, "surrogates": 5, "restarts": 10}}
TOKEN = "test-token-5f1c9a"


def world_and_model(tmp):
    """The small demo world and a k = 4 model derived from its reanalysis; (world folder, model path)."""
    world = os.path.join(tmp, "world")
    r = run([os.path.join(BUILD, "isohypse-demo-world"), "--out", world, "--size", "small"])
    if r.returncode != 0:
        raise RuntimeError("isohypse-demo-world failed: " + r.stderr[-500:])
    model = os.path.join(tmp, "model.nc")
    r = derive("--input", os.path.join(world, "reanalysis", "*.nc"), "--domain", DOMAIN, "--k", "4", "--out", model,
               "--config", write_config(tmp, QUICK))
    if r.returncode != 0:
        raise RuntimeError("derive failed: " + r.stderr[-500:])
    return world, model


class Server:
    """`isohypse serve` on a free loopback port; stop() ends it with SIGTERM."""

    def __init__(self, tmp, world, model, token=TOKEN, extra=()):
        self.inbox, self.archive = os.path.join(tmp, "inbox"), os.path.join(tmp, "archive")
        self.log_path = os.path.join(tmp, "serve.log")
        env = dict(os.environ, ISOHYPSE_TOKEN=token)
        args = [BIN, "serve", "--model", model, "--inbox", self.inbox, "--archive", self.archive,
                "--listen", "127.0.0.1:0", "--reforecasts", os.path.join(world, "reforecasts", "*.nc"), "--lag", "3",
                "--members", "4", "--poll", "0.5", "--observed", os.path.join(world, "analysis", "*.nc"), *extra]
        self.log = open(self.log_path, "a")
        self.proc = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=self.log, text=True, env=env)
        line = self.proc.stdout.readline()
        m = re.search(r"http://127\.0\.0\.1:(\d+)/", line)
        if not m:
            self.stop()
            raise RuntimeError(f"serve did not start: {line!r}; log: {open(self.log_path).read()[-800:]}")
        self.base = f"http://127.0.0.1:{m.group(1)}"

    def get(self, path, headers=None):
        """(status, headers, body bytes) of GET path."""
        return self.request("GET", path, headers=headers)

    def request(self, method, path, body=None, headers=None):
        req = urllib.request.Request(self.base + path, data=body, method=method, headers=headers or {})
        try:
            with urllib.request.urlopen(req, timeout=60) as r:
                return r.status, dict(r.headers), r.read()
        except urllib.error.HTTPError as e:
            return e.code, dict(e.headers), e.read()

    def get_json(self, path):
        status, _, body = self.get(path)
        return status, json.loads(body)

    def wait_for(self, predicate, seconds, what):
        """Polls predicate() until true or the time is up; returns whether it came true."""
        end = time.time() + seconds
        while time.time() < end:
            if predicate():
                return True
            time.sleep(0.3)
        print(f"timed out after {seconds} s waiting for {what}")
        return False

    def stop(self):
        """SIGTERM, then the exit code (killed after 20 s)."""
        if self.proc.poll() is None:
            self.proc.send_signal(signal.SIGTERM)
            try:
                self.proc.wait(20)
            except subprocess.TimeoutExpired:
                self.proc.kill()
                self.proc.wait()
        self.log.close()
        return self.proc.returncode


def deliver(world, inbox, day):
    """Copies the demo forecast of 2025-12-DD into the inbox whole: written under a hidden name, then renamed."""
    name = f"fc_202512{day:02d}.nc"
    tmp = os.path.join(inbox, "." + name + ".part")
    shutil.copyfile(os.path.join(world, "forecasts", name), tmp)
    os.rename(tmp, os.path.join(inbox, name))
    return name
