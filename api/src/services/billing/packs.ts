/**
 * The packs of compute units on sale. Prices are in US cents, as the payment provider counts money; what a
 * unit buys is the compute-unit rule of the quotas (one dynamic pull, or 1,000 static points).
 */
export const COMPUTE_PACKS = [
  { id: 'units-10k', name: '10,000 compute units', computeUnits: 10_000, priceCents: 1_900, currency: 'usd' },
  { id: 'units-50k', name: '50,000 compute units', computeUnits: 50_000, priceCents: 7_900, currency: 'usd' },
  { id: 'units-200k', name: '200,000 compute units', computeUnits: 200_000, priceCents: 24_900, currency: 'usd' },
] as const;

export type ComputePack = (typeof COMPUTE_PACKS)[number];
export type PackId = ComputePack['id'];

export const PACK_IDS = COMPUTE_PACKS.map((pack) => pack.id) as [PackId, ...PackId[]];

export function packById(id: string): ComputePack | undefined {
  return COMPUTE_PACKS.find((pack) => pack.id === id);
}
