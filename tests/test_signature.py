"""The reproducibility signature's exact text and JSON form."""

from scoring.base import Signature, package_version


def test_signature_text_and_json():
    sig = Signature.build("coverage", {"model": "smollm2@b179c952", "keywords": 40, "lowercase": True}, ("torch",))
    torch_v = package_version("torch")
    version = package_version("boildown")
    assert str(sig) == (f"coverage(model=smollm2@b179c952, keywords=40, lowercase=yes) "
                        f"on boildown {version}, torch {torch_v}")
    data = sig.to_dict()
    assert data == {"name": "coverage", "settings": {"model": "smollm2@b179c952", "keywords": "40", "lowercase": "yes"},
                    "versions": {"boildown": version, "torch": torch_v}, "text": str(sig)}


def test_a_value_holding_a_separator_is_quoted():
    sig = Signature("combined", (("formula", "0.5 a + 0.5 b"), ("empty", "")))
    assert str(sig) == 'combined(formula="0.5 a + 0.5 b", empty="")'
