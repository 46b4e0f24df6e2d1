"""serve_demo: migrate, load the demo, start worker and beat, then the web server; stop them after."""
import sys

from django.core.management import call_command

from analyses.management.commands import serve_demo


class FakeProcess:
    def __init__(self, args):
        self.args, self.terminated = args, False

    def terminate(self):
        self.terminated = True

    def wait(self, timeout=None):
        return 0


def test_serve_demo_runs_each_step_and_stops_the_workers(monkeypatch, capsys):
    steps, processes = [], []
    monkeypatch.setattr(serve_demo, "call_command", lambda name, *args, **kwargs: steps.append((name, args, kwargs)))
    monkeypatch.setattr(serve_demo.subprocess, "Popen", lambda args: processes.append(FakeProcess(args)) or processes[-1])
    call_command("serve_demo", "127.0.0.1:8099")
    assert [name for name, _, _ in steps] == ["migrate", "demo_load", "runserver"]
    assert steps[1][2] == {"new_tokens": True}  # tokens are shown once: fresh demo tokens each start
    # no --insecure: WhiteNoise serves the docs' scripts (tests/labcore/test_static_files.py)
    assert steps[-1][1] == ("127.0.0.1:8099",) and "insecure_serving" not in steps[-1][2]
    assert [p.args[:6] for p in processes] == [
        [sys.executable, "-m", "celery", "-A", "labcore", "worker"],
        [sys.executable, "-m", "celery", "-A", "labcore", "beat"],
    ]
    assert all(p.terminated for p in processes)
    out = capsys.readouterr().out
    assert "[1/3]" in out and "[3/3]" in out and "http://127.0.0.1:8099/api/docs/" in out


def test_no_celery_starts_no_worker(monkeypatch):
    started = []
    monkeypatch.setattr(serve_demo, "call_command", lambda *args, **kwargs: None)
    monkeypatch.setattr(serve_demo.subprocess, "Popen", lambda args: started.append(args))
    call_command("serve_demo", "--no-celery")
    assert started == []
