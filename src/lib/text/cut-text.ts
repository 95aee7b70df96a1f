/**
 * The longest start of `text` that fits in `maxUnits` UTF-16 code units (what a varchar(n)
 * column or a length check counts) without splitting a surrogate pair: half an emoji would be
 * stored as an unpaired surrogate and shown as U+FFFD.
 */
export function cutText(text: string, maxUnits: number): string {
  if (text.length <= maxUnits) return text;
  const lead = text.charCodeAt(maxUnits - 1);
  const splitsPair = lead >= 0xd800 && lead <= 0xdbff;
  return text.slice(0, splitsPair ? maxUnits - 1 : maxUnits);
}
