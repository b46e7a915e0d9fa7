import AxeBuilder from '@axe-core/playwright'
import type { Locator, Page } from '@playwright/test'
import { expect, test } from './fixtures'
import { roomWithLedger } from './people'

/**
 * Feedback (issue 8): destructive steps ask first in one dialog of our own (useConfirm), saved and
 * failed actions show toasts (useToasts), both usable by keyboard and clean under axe; and the
 * header stays one row on a 360 px phone.
 */
const criteria = [
  { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min', precision: 1 },
  { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max', precision: 0 },
  { id: 'habitat', name: 'Habitat affected', unit: 'ha', direction: 'min', precision: 0 },
]
const alternatives = [
  { id: 'wall', name: 'North Wall', scores: { cost: 4, homes: 800, habitat: 30 } },
  { id: 'barrier', name: 'Tidal Barrier', scores: { cost: 27, homes: 3000, habitat: 5 } },
  { id: 'dunes', name: 'Dune Nourishment', scores: { cost: 12, homes: 1500, habitat: 2 } },
]

/** axe's serious and critical violations (the same rule set as accessibility.spec.ts). */
async function seriousViolations(page: Page) {
  const results = await new AxeBuilder({ page })
    .withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'wcag22aa', 'best-practice'])
    .analyze()
  return results.violations
    .filter(v => v.impact === 'serious' || v.impact === 'critical')
    .map(v => `[${v.impact}] ${v.id}: ${v.help} at ${v.nodes.slice(0, 5).map(n => n.target.join(' ')).join(', ')}`)
}

const toasts = (page: Page, kind: 'saved' | 'failed') => page.locator(`[data-testid="toast"][data-kind="${kind}"]`)
const criterionRows = (page: Page) => page.getByTestId('criterion-row')

async function openEditor(page: Page, roomId: string) {
  await page.goto(`/rooms/${roomId}`)
  await page.getByTestId('edit-ledger').click()
  await expect(criterionRows(page)).toHaveCount(3)
}

test('removing a criterion asks first: Cancel and Escape keep it, focus returns, confirming removes it', async ({ page }) => {
  const roomId = await roomWithLedger(page, 'Feedback: confirmations', { criteria, alternatives })
  await openEditor(page, roomId)
  const remove = page.getByRole('button', { name: 'Remove Habitat affected' })
  const dialog = page.getByRole('dialog', { name: 'Remove “Habitat affected”?' })

  // Asks first; the safe choice has the focus; the page behind is clean under axe with it open.
  await remove.click()
  await expect(dialog).toBeVisible()
  await expect(dialog).toContainText('Remove “Habitat affected” and its scores from every alternative?')
  await expect(dialog.getByRole('button', { name: 'Cancel' })).toBeFocused()
  const withDialog = await seriousViolations(page)
  expect(withDialog, withDialog.join('\n')).toEqual([])

  // Cancel keeps the criterion, and the focus goes back to the Remove button.
  await dialog.getByRole('button', { name: 'Cancel' }).click()
  await expect(dialog).toBeHidden()
  await expect(criterionRows(page)).toHaveCount(3)
  await expect(remove).toBeFocused()

  // By keyboard only: Enter opens it, Escape closes it and changes nothing.
  await page.keyboard.press('Enter')
  await expect(dialog).toBeVisible()
  await page.keyboard.press('Escape')
  await expect(dialog).toBeHidden()
  await expect(criterionRows(page)).toHaveCount(3)
  await expect(remove).toBeFocused()

  // Enter again, Tab to the confirm button, Enter: removed (from the form; nothing saved yet).
  await page.keyboard.press('Enter')
  await expect(dialog).toBeVisible()
  await page.keyboard.press('Tab')
  await expect(dialog.getByRole('button', { name: 'Remove criterion' })).toBeFocused()
  await page.keyboard.press('Enter')
  await expect(dialog).toBeHidden()
  await expect(criterionRows(page)).toHaveCount(2)
  await expect(page.getByRole('button', { name: 'Remove Habitat affected' })).toHaveCount(0)
  await expect(page.getByRole('button', { name: 'Remove Capital cost' })).toBeVisible()
})

test('a saved action shows a success toast that goes away by itself, and passes axe', async ({ page }) => {
  await page.emulateMedia({ reducedMotion: 'reduce' })
  const roomId = await roomWithLedger(page, 'Feedback: saved', { criteria, alternatives })
  await openEditor(page, roomId)
  await page.getByRole('button', { name: 'Remove Tidal Barrier' }).click()
  await page.getByRole('dialog', { name: 'Remove “Tidal Barrier”?' }).getByRole('button', { name: 'Remove alternative' }).click()
  await page.getByRole('button', { name: 'Save as version 2' }).click()
  await page.mouse.move(0, 0) // not resting on the toast (that pauses its clock)

  const toast = toasts(page, 'saved')
  await expect(toast).toHaveCount(1)
  await expect(toast).toContainText('Ledger saved as version 2.')
  // Read out politely, with an icon and words, not colour alone; no animation when asked for less motion.
  await expect(page.getByRole('status').filter({ has: toast })).toHaveCount(1)
  await expect(toast).toContainText('✓')
  expect(await toast.evaluate(el => getComputedStyle(el).animationName)).toBe('none')
  const withToast = await seriousViolations(page)
  expect(withToast, withToast.join('\n')).toEqual([])
  // The server has the new version, and the toast leaves on its own after a few seconds.
  expect((await (await page.request.get(`/api/rooms/${roomId}/ledger`)).json()).version.number).toBe(2)
  await expect(toast).toHaveCount(0, { timeout: 12_000 })
})

test('a refused action shows a failure toast with the server\'s words that stays until dismissed', async ({ page }) => {
  const roomId = await roomWithLedger(page, 'Feedback: refused', { criteria, alternatives })
  await page.goto(`/rooms/${roomId}?tab=people`)
  const members = page.getByTestId('member-list')
  await expect(members.getByRole('listitem')).toHaveCount(1)
  // The only facilitator removing themself: asks first, then the server says no, and why.
  await members.getByRole('button', { name: /^Remove .* from the room$/ }).click()
  const dialog = page.getByRole('dialog', { name: /^Remove / })
  await expect(dialog).toContainText('They lose access at once')
  await dialog.getByRole('button', { name: 'Yes, remove' }).click()
  const message = 'A room needs at least one facilitator. Make someone else facilitator first, then remove this person.'
  const toast = toasts(page, 'failed')
  await expect(toast).toContainText(message)
  await expect(page.getByRole('alert').filter({ has: toast })).toHaveCount(1)
  await expect(page.getByTestId('people-problem')).toHaveText(message) // the inline message stays too
  await expect(members.getByRole('listitem')).toHaveCount(1)
  const withToast = await seriousViolations(page)
  expect(withToast, withToast.join('\n')).toEqual([])

  // Failures do not leave by themselves (a success would be gone by now) …
  await page.mouse.move(0, 0)
  await page.waitForTimeout(7_500)
  await expect(toast).toBeVisible()
  // … only when dismissed, by its close button (a 44 px target).
  const close: Locator = toast.getByRole('button', { name: 'Dismiss this message' })
  const box = (await close.boundingBox())!
  expect(Math.min(box.width, box.height)).toBeGreaterThanOrEqual(44)
  await close.click()
  await expect(toast).toHaveCount(0)
})

test('on a 360 px phone the header is one row and nothing scrolls sideways', async ({ page }) => {
  await page.setViewportSize({ width: 360, height: 740 })
  const sideways = () => page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)
  const oneRow = async (control: Locator) => {
    const logo = (await page.getByTestId('home-link').boundingBox())!
    const box = (await control.boundingBox())!
    // Same row: the control's vertical centre is the logo's; a 44 px target, one line tall.
    expect(Math.abs((box.y + box.height / 2) - (logo.y + logo.height / 2))).toBeLessThan(2)
    expect(box.height).toBeGreaterThanOrEqual(44)
    expect(box.height).toBeLessThan(56)
    expect(box.width).toBeGreaterThanOrEqual(44)
    expect((await page.locator('header').boundingBox())!.height).toBeLessThan(70)
  }

  // Signed out ("Create account" is "Sign up" on a phone).
  await page.goto('/')
  await oneRow(page.locator('header').getByRole('link', { name: 'Sign up' }))
  await oneRow(page.locator('header').getByRole('link', { name: 'Sign in' }))
  expect(await sideways()).toBe(0)

  // Signed in: "Sign out" keeps its name for screen readers.
  await roomWithLedger(page, 'Feedback: header', { criteria, alternatives })
  await page.goto('/rooms')
  const signOut = page.locator('header').getByRole('button', { name: 'Sign out' })
  await expect(signOut).toBeVisible()
  await oneRow(signOut)
  await oneRow(page.locator('header').getByRole('link', { name: 'My rooms' }))
  await oneRow(page.locator('header').getByTestId('account-link'))
  expect(await sideways()).toBe(0)
})
