"""The calculation trail's shape and values (airgate.evaluation.trail): what writers read to
write a trail's values without its steps. Structure only, no physics (common practice)."""

from airgate.evaluation.trail import Trail


def test_signature_and_values_follow_the_steps_in_order():
    t = Trail()
    t.add("Vbz", 120.0, "airflow", formula="{Rp}·{Pz}")
    t.add("Az", 92.9, "area", origin="schedule")
    t.add("Vbz", 125.0, "airflow")  # a step added again keeps its place and takes the new value
    assert t.signature() == (("Vbz", "airflow"), ("Az", "area"))
    assert t.values() == [125.0, 92.9]
    assert all(type(v) is float for v in t.values())


def test_an_empty_trail_has_an_empty_shape():
    assert Trail().signature() == () and Trail().values() == []
