/**
 * Field cautions shown to technicians before the first task of the day, on every task and on the
 * printed sheet. General wording in our own words; local rules and licensed practice come first.
 */
export interface FieldCaution {
	key: 'land' | 'weather' | 'water' | 'utilities' | 'rules';
	title: string;
	text: string;
}

export const FIELD_CAUTIONS: readonly FieldCaution[] = [
	{ key: 'land', title: 'Private land', text: 'Ask the landowner or occupier before you go onto private land, and keep to what they agree: gates as you found them, livestock and crops left undisturbed.' },
	{
		key: 'weather',
		title: 'Weather and floods',
		text: 'Check the forecast and any flood warnings before you set out. When you hear thunder, stop working outdoors and take shelter; go back out only once half an hour has passed since the last thunder. Never wade a flooded ford or fast water.'
	},
	{ key: 'water', title: 'Near water', text: 'By rivers, ditches and ponds, work in pairs and stay back from steep or undercut banks, which can give way.' },
	{
		key: 'utilities',
		title: 'Buried cables and pipes',
		text: 'Before you auger or dig, ask the local utility-locate service to mark the ground where there is one (in many places this is the law) and wait for the marks. Where there is none, check the utility plans, sweep with a cable locator and dig a trial hole by hand first.'
	},
	{ key: 'rules', title: 'Local rules first', text: 'These notes are general. Local rules, permits and licensed practice come first wherever they say more.' }
];
