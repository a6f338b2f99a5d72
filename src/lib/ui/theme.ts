// Dark by default for the night shift; a light theme for daytime review, remembered per browser.
export type Theme = 'dark' | 'light';
export const THEME_KEY = 'pw-theme';

export function currentTheme(): Theme {
	if (typeof document === 'undefined') return 'dark';
	return document.documentElement.classList.contains('dark') ? 'dark' : 'light';
}

export function applyTheme(theme: Theme) {
	document.documentElement.classList.toggle('dark', theme === 'dark');
	try {
		localStorage.setItem(THEME_KEY, theme);
	} catch {
		// Private windows may refuse storage; the theme still applies for this page.
	}
}
