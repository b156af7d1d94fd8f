// Words for the invented store's product search ("Kettlewood Hardware"). Every product, brand and
// query here is made up for the demo; nothing refers to a real shop or catalogue.

/** Product families: what people type, the variants they add, and the locale-specific wording. */
export const PRODUCTS = [
  { en: 'cordless drill', de: 'akkuschrauber', fr: 'perceuse sans fil', variants: ['18v', '12v', 'brushless', 'with 2 batteries', 'compact'] },
  { en: 'wood screws', de: 'holzschrauben', fr: 'vis à bois', variants: ['4x40', '5x60', '3.5x30', 'stainless', 'box of 200'] },
  { en: 'pvc pipe', de: 'pvc rohr', fr: 'tube pvc', variants: ['32mm', '40mm', '50mm', '2m', 'elbow 90'] },
  { en: 'paint roller', de: 'farbroller', fr: 'rouleau peinture', variants: ['9 inch', 'mini', 'microfibre', 'with tray', 'extension pole'] },
  { en: 'hex key set', de: 'inbusschlüssel satz', fr: 'jeu de clés hexagonales', variants: ['metric', 'ball end', 'torx', 'folding'] },
  { en: 'led bulb', de: 'led lampe', fr: 'ampoule led', variants: ['e27 warm white', 'gu10', 'e14 candle', 'dimmable', '4 pack'] },
  { en: 'garden hose', de: 'gartenschlauch', fr: 'tuyau d’arrosage', variants: ['25m', '50m', 'expandable', 'reel', 'spray nozzle'] },
  { en: 'safety glasses', de: 'schutzbrille', fr: 'lunettes de protection', variants: ['anti fog', 'tinted', 'over glasses'] },
  { en: 'circular saw', de: 'kreissäge', fr: 'scie circulaire', variants: ['blade 190mm', 'cordless', 'plunge', '1400w'] },
  { en: 'wall plugs', de: 'dübel', fr: 'chevilles', variants: ['6mm', '8mm', 'plasterboard', 'assorted'] },
  { en: 'silicone sealant', de: 'silikon', fr: 'mastic silicone', variants: ['clear', 'white bathroom', 'sealant gun'] },
  { en: 'extension cord', de: 'verlängerungskabel', fr: 'rallonge électrique', variants: ['10m', 'outdoor', '4 way', 'reel 25m'] },
  { en: 'sandpaper', de: 'schleifpapier', fr: 'papier de verre', variants: ['120 grit', 'assorted', 'orbital discs', '80 grit'] },
  { en: 'spirit level', de: 'wasserwaage', fr: 'niveau à bulle', variants: ['60cm', 'laser', 'magnetic', 'torpedo'] },
  { en: 'tape measure', de: 'maßband', fr: 'mètre ruban', variants: ['5m', '8m', 'laser', 'magnetic hook'] },
  { en: 'work gloves', de: 'arbeitshandschuhe', fr: 'gants de travail', variants: ['size 10', 'cut resistant', 'nitrile', 'winter'] },
  { en: 'angle grinder', de: 'winkelschleifer', fr: 'meuleuse', variants: ['115mm', '125mm', 'cordless', 'cutting discs'] },
  { en: 'door hinge', de: 'türscharnier', fr: 'charnière de porte', variants: ['brass', '75mm', 'soft close', 'pair'] },
  { en: 'wood glue', de: 'holzleim', fr: 'colle à bois', variants: ['waterproof', '750g', 'fast set'] },
  { en: 'ladder', de: 'leiter', fr: 'échelle', variants: ['3 step', 'telescopic', 'aluminium 6m', 'platform'] },
  { en: 'padlock', de: 'vorhängeschloss', fr: 'cadenas', variants: ['combination', 'brass 40mm', 'weatherproof', 'keyed alike'] },
  { en: 'masking tape', de: 'malerkrepp', fr: 'ruban de masquage', variants: ['25mm', '50mm', 'exterior', 'delicate surfaces'] },
  { en: 'wheelbarrow', de: 'schubkarre', fr: 'brouette', variants: ['100l', 'pneumatic tyre', 'folding'] },
  { en: 'tile cutter', de: 'fliesenschneider', fr: 'coupe-carrelage', variants: ['manual 600mm', 'wet saw', 'nippers'] },
  { en: 'shelf brackets', de: 'regalträger', fr: 'équerres étagère', variants: ['black 200mm', 'floating', 'heavy duty'] },
];

/** Invented brand names for product titles. */
export const BRANDS = ['Oakridge', 'Vantor', 'Pellworth', 'Stonemark', 'Ferrow', 'Quillby', 'Haskin', 'Norvale'];

export const LOCALES = ['en-GB', 'de-DE', 'fr-FR'];
export const DEVICES = ['desktop', 'mobile'];
