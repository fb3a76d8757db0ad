"""Shared step of the notebook and storage browser tests: pin a card's result with a note."""

from playwright.sync_api import expect


def pin(page, form_id: str, note: str) -> None:
    """Open the pin box of card ``form_id``, type ``note``, press Enter and wait for 'Pinned'."""
    card = page.locator(f"#card-{form_id}")
    card.locator(".pin-open").click()
    card.locator(".pin-note").fill(note)
    card.locator(".pin-note").press("Enter")
    expect(card.locator(".pin-status")).to_contain_text("Pinned")
