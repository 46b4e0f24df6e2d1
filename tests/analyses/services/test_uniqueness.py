"""The unique-key helper: a lost race on a unique index answers like the sequential check.

The inserts below bypass the check on purpose, as a concurrent request that passed it at
the same moment would; the races themselves are in tests/analyses/api/test_concurrent_creates.py."""
from __future__ import annotations

import pytest
from django.db import IntegrityError

from analyses.errors import InvalidInput
from analyses.models import Product
from analyses.services.uniqueness import UniqueKey, insert_or_fetch
from tests.factories import ProductFactory

pytestmark = pytest.mark.django_db


def _key(code: str) -> UniqueKey:
    return UniqueKey(Product, "code", code, f"product {code!r} already exists")


def test_the_sequential_check_and_the_index_give_the_same_error():
    ProductFactory(code="RSO")
    with pytest.raises(InvalidInput) as checked:
        _key("RSO").refuse_if_taken()
    with pytest.raises(InvalidInput) as raced:
        with _key("RSO").insert():
            ProductFactory(code="RSO")  # the insert that lost the race
    assert checked.value.fields == raced.value.fields == {"code": ["product 'RSO' already exists"]}
    assert Product.objects.filter(code="RSO").count() == 1  # the transaction is still usable


def test_the_block_is_rolled_back_whole():
    ProductFactory(code="RSO")
    with pytest.raises(InvalidInput):
        with _key("RSO").insert():
            ProductFactory(code="OTHER")
            ProductFactory(code="RSO")
    assert not Product.objects.filter(code="OTHER").exists()


def test_another_integrity_error_is_not_taken_for_a_duplicate():
    ProductFactory(code="TAKEN")
    with pytest.raises(IntegrityError):
        with _key("FREE").insert():  # its own key is free: the failure is about something else
            ProductFactory(code="TAKEN")


def test_an_input_name_other_than_the_model_field():
    ProductFactory(code="RSO")
    key = UniqueKey(Product, "code", "RSO", "is taken", input_field="product_code")
    with pytest.raises(InvalidInput) as raised:
        key.refuse_if_taken()
    assert raised.value.fields == {"product_code": ["is taken"]}


def test_insert_or_fetch_returns_the_winner_when_the_insert_loses():
    winner = ProductFactory(code="RSO")
    row, made = insert_or_fetch(Product, {"code": "RSO"}, lambda: ProductFactory(code="RSO"))
    assert (row.pk, made) == (winner.pk, False)
    row, made = insert_or_fetch(Product, {"code": "NEW"}, lambda: ProductFactory(code="NEW"))
    assert made and row.code == "NEW"


def test_insert_or_fetch_raises_when_no_row_holds_the_key():
    ProductFactory(code="TAKEN")
    with pytest.raises(IntegrityError):
        insert_or_fetch(Product, {"code": "FREE"}, lambda: ProductFactory(code="TAKEN"))
