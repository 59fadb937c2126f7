export const THEME_NAMES = { light: 'crackpointLight', dark: 'crackpointDark' } as const
