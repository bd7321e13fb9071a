"""The reproducibility signature's exact text and JSON form."""

from scoring.base import Signature, package_version


def test_signature_text_and_json():
    sig = Signature.build("coverage", {"model": "smollm2@b179c952", "keys": 40, "gain": "logprob"}, ("torch",))
    torch_v = package_version("torch")
    version = package_version("boildown")
    assert str(sig) == f"coverage|model:smollm2@b179c952|keys:40|gain:logprob|torch:{torch_v}|v:{version}"
    data = sig.to_dict()
    assert data["keys"] == "40" and data["v"] == version and data["text"] == str(sig)
