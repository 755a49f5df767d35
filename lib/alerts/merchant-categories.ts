// Plain descriptions of common merchant category codes (ISO 18245), written for this app so an
// analyst reads "Money transfer" rather than a bare 4829. Not the standard's own titles and not a
// complete list: codes not here are shown by number with their broad range.

const descriptions: Record<string, string> = {
  "4111": "Local and commuter transport",
  "4121": "Taxis and ride hailing",
  "4131": "Bus lines",
  "4411": "Cruise lines",
  "4511": "Airlines",
  "4722": "Travel agencies and tour operators",
  "4784": "Road and bridge tolls",
  "4812": "Phones and telecom equipment",
  "4814": "Telecom services",
  "4816": "Computer network and online services",
  "4829": "Money transfer",
  "4899": "Cable, satellite and streaming TV",
  "4900": "Utilities: electricity, gas, water",
  "5045": "Computers and peripherals",
  "5094": "Precious stones and metals, watches",
  "5200": "Home supply warehouses",
  "5300": "Wholesale clubs",
  "5310": "Discount stores",
  "5311": "Department stores",
  "5331": "Variety stores",
  "5399": "General merchandise",
  "5411": "Grocery stores and supermarkets",
  "5499": "Convenience and specialty food stores",
  "5541": "Fuel stations",
  "5542": "Automated fuel dispensers",
  "5651": "Family clothing",
  "5661": "Shoe stores",
  "5691": "Clothing stores",
  "5712": "Furniture and home furnishings",
  "5722": "Household appliances",
  "5732": "Consumer electronics",
  "5734": "Software stores",
  "5735": "Music and record stores",
  "5812": "Restaurants",
  "5813": "Bars and night clubs",
  "5814": "Fast food",
  "5815": "Digital media: books, films, music",
  "5816": "Digital games",
  "5817": "Digital apps",
  "5818": "Digital goods, large sellers",
  "5912": "Pharmacies and drugstores",
  "5921": "Liquor stores",
  "5944": "Jewellery and watches",
  "5945": "Toys and games",
  "5964": "Catalogue merchants (mail order)",
  "5965": "Catalogue and retail merchants",
  "5966": "Outbound telemarketing",
  "5967": "Inbound telemarketing and premium-rate services",
  "5969": "Other direct marketing",
  "5993": "Tobacco shops",
  "5999": "Miscellaneous specialty retail",
  "6010": "Cash over the counter at a bank",
  "6011": "Cash machine (ATM) withdrawal",
  "6012": "Financial institutions: goods and services",
  "6051": "Quasi-cash: money orders, foreign currency, crypto-assets",
  "6211": "Securities brokers",
  "6300": "Insurance",
  "6540": "Stored-value card loads",
  "7011": "Hotels and lodging",
  "7273": "Dating services",
  "7297": "Massage parlours",
  "7372": "Computer programming and data processing",
  "7399": "Business services",
  "7512": "Car rental",
  "7523": "Parking",
  "7832": "Cinemas",
  "7922": "Theatre and event tickets",
  "7994": "Video game arcades",
  "7995": "Gambling: betting, lotteries, casino chips",
  "7996": "Amusement parks",
  "7997": "Clubs and sports memberships",
  "8011": "Doctors",
  "8021": "Dentists",
  "8062": "Hospitals",
  "8099": "Health services",
  "8220": "Colleges and universities",
  "8398": "Charities and fundraising",
  "8999": "Professional services",
  "9211": "Court costs and fines",
  "9311": "Tax payments",
  "9399": "Government services",
  "9402": "Postal services",
};

/** Broad ranges of the code space, for codes without their own description. */
const ranges: { from: number; to: number; description: string }[] = [
  { from: 1, to: 1499, description: "Agricultural services" },
  { from: 1500, to: 2999, description: "Contracted services" },
  { from: 3000, to: 3299, description: "Airline (by carrier)" },
  { from: 3300, to: 3499, description: "Car rental (by company)" },
  { from: 3500, to: 3999, description: "Lodging (by chain)" },
  { from: 4000, to: 4799, description: "Transport" },
  { from: 4800, to: 4999, description: "Utilities and telecom" },
  { from: 5000, to: 5599, description: "Retail" },
  { from: 5600, to: 5699, description: "Clothing" },
  { from: 5700, to: 7299, description: "Other merchants" },
  { from: 7300, to: 7999, description: "Business and leisure services" },
  { from: 8000, to: 8999, description: "Professional services and memberships" },
  { from: 9000, to: 9999, description: "Government services" },
];

export interface MerchantCategory {
  code: string;
  description: string;
  /** False when only the code's broad range is known. */
  known: boolean;
}

export function merchantCategory(code: string): MerchantCategory {
  const own = descriptions[code];
  if (own) return { code, description: own, known: true };
  const value = /^[0-9]{4}$/.test(code) ? Number(code) : NaN;
  const range = ranges.find((candidate) => value >= candidate.from && value <= candidate.to);
  return { code, description: range ? `${range.description} (code not in our list)` : "Unknown category", known: false };
}
